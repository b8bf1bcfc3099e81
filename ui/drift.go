package ui

import (
	"math"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/charmbracelet/bubbles/key"
	"github.com/charmbracelet/bubbles/viewport"
	tea "github.com/charmbracelet/bubbletea"

	"bitsift/ingest"
	"bitsift/model"
	"bitsift/sanitize"
)

// surprisingShown is how many surprising records a deep frame asks for.
const surprisingShown = 12

// driftView is the Drift screen: what changed against the baseline. The
// fields whose distribution shifted, the baseline's rules that broke with
// the values that break them, and the most surprising records with the
// fields that made them so. Shifts and broken rules come with every frame;
// surprising records with the deep frames, every few seconds.
type driftView struct {
	env  *env
	w, h int
	vp   viewport.Model
	// items are the findings on the page that open the lines behind them
	// (Enter); sel is the one under the cursor.
	items []driftItem
	sel   int
}

// driftItem is one finding on the Drift page: its line on the page, and
// what finds the records behind it.
type driftItem struct {
	line  int
	title string
	conds []model.Cond
}

func newDriftView(e *env) driftView { return driftView{env: e, vp: viewport.New(0, 0)} }

func (v driftView) setSize(w, h int) driftView {
	v.w, v.h = w, h
	v.vp.Width, v.vp.Height = w, h
	return v.refresh()
}

// Update moves the cursor over the findings (up and down), scrolls (the
// other movements), and opens the lines behind a finding (Enter).
func (v driftView) Update(msg tea.Msg) (driftView, tea.Cmd) {
	k := v.env.keys
	if km, ok := msg.(tea.KeyMsg); ok && len(v.items) > 0 {
		switch {
		case key.Matches(km, k.Open):
			it := v.items[min(v.sel, len(v.items)-1)]
			return v, openLines(it.title, it.conds)
		case key.Matches(km, k.Up), key.Matches(km, k.Down):
			s, _ := scrollOf(k, msg, v.h)
			v.sel = s.apply(v.sel, len(v.items))
			line := v.items[v.sel].line
			if line < v.vp.YOffset+2 {
				v.vp.SetYOffset(max(0, line-2))
			} else if line >= v.vp.YOffset+v.h-1 {
				v.vp.SetYOffset(line - v.h + 2)
			}
			return v.refresh(), nil
		}
	}
	if s, ok := scrollOf(k, msg, v.h); ok {
		scrollViewport(&v.vp, s)
	}
	return v, nil
}

// View draws exactly h lines.
func (v driftView) View() string { return fill(strings.Split(v.vp.View(), "\n"), v.h) }

// alerts is the number of flagged shifts and broken rules on show.
func (v driftView) alerts() int {
	f := v.env.frame
	if f == nil || f.Snap.Changes == nil {
		return 0
	}
	n := len(f.Snap.Changes.Broken)
	for _, s := range f.Snap.Changes.Shifts {
		if s.Flagged {
			n++
		}
	}
	return n
}

func (v driftView) refresh() driftView {
	f := v.env.frame
	if f == nil {
		v.vp.SetContent(v.env.st.Muted.Render("  waiting for the first records…"))
		return v
	}
	y := v.vp.YOffset
	lines, items := v.page(f)
	v.items = items
	v.sel = max(0, min(v.sel, len(items)-1))
	if len(items) > 0 {
		i := items[v.sel].line
		// ▸ marks the cursor where colour does not show.
		plain := ansiStrip(lines[i])
		if strings.HasPrefix(plain, " ") {
			plain = "▸" + plain[1:]
		} else {
			plain = "▸" + plain
		}
		lines[i] = v.env.st.Cursor.Render(padRight(sanitize.Fit(plain, v.w), v.w))
	}
	v.vp.SetContent(strings.Join(lines, "\n"))
	v.vp.SetYOffset(y)
	return v
}

func (v driftView) page(f *ingest.Frame) ([]string, []driftItem) {
	out := v.baseline(f)
	var items []driftItem
	add := func(block []string, its []driftItem) {
		for _, it := range its {
			it.line += len(out)
			items = append(items, it)
		}
		out = append(out, block...)
	}
	ch := f.Snap.Changes
	// Broken rules first: they are often the first sign of a bad deploy.
	if ch != nil && ch.Baseline != nil {
		out = append(out, "")
		add(v.broken(ch))
		out = append(out, "")
		add(v.shifts(f.Snap, ch, true))
	}
	out = append(out, "")
	add(v.timeline())
	out = append(out, "")
	add(v.surprising())
	if ch != nil && ch.Baseline != nil {
		out = append(out, "")
		add(v.shifts(f.Snap, ch, false))
	}
	return out, items
}

// baseline says what the window is compared with, and how to change it.
func (v driftView) baseline(f *ingest.Frame) []string {
	st := v.env.st
	var what string
	ch := f.Snap.Changes
	switch {
	case ch != nil && ch.Baseline != nil:
		b := ch.Baseline
		switch {
		case b.Source == "pinned":
			what = "pinned"
			if t := v.env.pinnedAt; !t.IsZero() {
				what += " at " + t.Format("15:04:05")
			}
		case b.Mode == model.BaselineRolling:
			what = "rolling: the window as it was one to two window lengths ago"
		default:
			what = "from " + sanitize.String(b.Source)
		}
		what += " · " + count(int64(b.Records)) + " records · now " + count(int64(f.Snap.Records))
	case f.Baseline == model.BaselineRolling:
		what = "rolling, none yet: it is the window as it was one to two window lengths ago"
	case f.Baseline == model.BaselineFixed:
		what = "pinned, not yet in a frame"
	default:
		what = "none"
	}
	head := st.Title.Render("BASELINE") + "  " + what
	keys := st.Muted.Render("          b pins the window as it is now · B goes back to rolling")
	return []string{ansiFit(head, v.w), ansiFit(keys, v.w)}
}

// shifts is the table of the fields whose distribution moved (flagged),
// or of the others.
func (v driftView) shifts(snap *model.Snapshot, ch *model.Changes, flagged bool) ([]string, []driftItem) {
	st := v.env.st
	var list []model.FieldShift
	for _, s := range ch.Shifts {
		if s.Flagged == flagged {
			list = append(list, s)
		}
	}
	var out []string
	var items []driftItem
	if flagged {
		out = []string{st.Title.Render("SHIFTED FIELDS") + "  " + count(int64(len(list))) + " flagged of " +
			count(int64(len(ch.Shifts))) + st.Muted.Render(" · JSD: 0 same, 1 disjoint · z: H against its own history")}
		if len(list) == 0 {
			return append(out, st.Muted.Render("  none: every field's distribution is as in the baseline")), nil
		}
	} else {
		if len(list) == 0 {
			return nil, nil
		}
		out = []string{st.Title.Render("UNSHIFTED FIELDS") + "  " + count(int64(len(list))) + st.Muted.Render(" · within what chance gives")}
	}
	nw := max(10, min(28, v.w/4))
	bw := max(6, min(30, v.w-nw-40))
	top := 0.0
	for _, s := range ch.Shifts {
		top = math.Max(top, s.JSD) // one scale for both tables
	}
	out = append(out, st.Header.Render(ansiFit("  "+padRight("FIELD", nw)+" "+padLeft("JSD bits", 8)+" "+padRight("", bw)+
		" "+padLeft("ΔH bits", 8)+" "+padLeft("z", 6), v.w)))
	for _, s := range list {
		mark := "  "
		if s.Flagged {
			mark = st.Warn.Render("Δ ")
		}
		frac := 0.0
		if top > 0 {
			frac = s.JSD / top
		}
		full, empty := barCells(frac, bw)
		jsd := strconv.FormatFloat(s.JSD, 'f', 4, 64)
		tail := ""
		if s.Binned {
			tail = st.Muted.Render(" binned")
		}
		z := signedZ(s.Z)
		line := mark + sanitize.Pad(s.Field, nw) + " " + padLeft(jsd, 8) + " " + st.Bar.Render(full) + st.BarEmpty.Render(empty) +
			" " + padLeft(signed(s.EntropyChange), 8) + " " + padLeft(z, 6) + tail
		items = append(items, shiftItem(snap, s.Field, len(out)))
		out = append(out, ansiFit(line, v.w))
	}
	return out, items
}

// shiftItem opens the records of a shifted field that do not have its
// most frequent value now (the ones that moved it, most often).
func shiftItem(snap *model.Snapshot, field string, line int) driftItem {
	it := driftItem{line: line, title: sanitize.String(field) + " shifted: its records other than the most frequent value"}
	if i := snap.Index(field); i >= 0 && len(snap.Fields[i].Top) > 0 {
		top := snap.Fields[i].Top[0]
		it.conds = []model.Cond{{Field: field, Value: top.Value, Absent: top.Absent, Not: true}}
		it.title = sanitize.String(field) + "≠" + sanitize.String(top.Value) + " (" + sanitize.String(field) + " shifted)"
	}
	return it
}

// broken lists the rules of the baseline that no longer hold, with the
// values that break them.
func (v driftView) broken(ch *model.Changes) ([]string, []driftItem) {
	st := v.env.st
	out := []string{st.Title.Render("BROKEN RULES") + "  " + count(int64(len(ch.Broken))) +
		st.Muted.Render(" · dependencies that held in the baseline and no longer do · enter: the lines")}
	if len(ch.Broken) == 0 {
		return append(out, st.Muted.Render("  none: every rule of the baseline still holds")), nil
	}
	var items []driftItem
	for _, b := range ch.Broken {
		target, given := sanitize.String(b.Target), sanitize.String(b.Given)
		// Three decimals: a rule broken by a few records moves H(F|G)
		// by thousandths, and "0.00 → 0.00" would read as no change.
		head := st.Bad.Render("✗ ") + target + " given " + given + " · " + count(int64(b.Violations)) + " records break it · H(F|G) " +
			formatFloat(b.BaselineBits, 3) + " → " + formatFloat(b.NowBits, 3) + " bits"
		out = append(out, ansiFit(head, v.w))
		for _, e := range b.Examples {
			now := sanitize.Fit(e.TargetValue, max(8, v.w/4))
			if e.TargetAbsent {
				now = "(absent)"
			}
			line := "    " + given + "=" + sanitize.Fit(e.GivenValue, max(8, v.w/4)) + " → " + target + "=" + now +
				st.Muted.Render(" (was "+sanitize.Fit(e.Expected, max(8, v.w/5))+")") + " ×" + count(int64(e.Count))
			items = append(items, driftItem{line: len(out), title: given + "=" + sanitize.String(e.GivenValue) + " → " + target + "=" + now,
				conds: []model.Cond{{Field: b.Given, Value: e.GivenValue}, {Field: b.Target, Value: e.TargetValue, Absent: e.TargetAbsent}}})
			out = append(out, ansiFit(line, v.w))
		}
	}
	return out, items
}

// surprising lists the records of the last deep frame that cost the most
// bits, each with the fields that made it so.
func (v driftView) surprising() ([]string, []driftItem) {
	st := v.env.st
	d := v.env.deep
	if d == nil || d.Snap.Changes == nil {
		return []string{st.Title.Render("SURPRISING RECORDS") + st.Muted.Render("  measured every few seconds on this screen; the first is on its way…")}, nil
	}
	var items []driftItem
	ch := d.Snap.Changes
	against := "against the window"
	if ch.Baseline != nil {
		against = "against the baseline"
	}
	age := v.env.now().Sub(d.Snap.Taken)
	out := []string{st.Title.Render("SURPRISING RECORDS") + "  " + count(int64(len(ch.Surprising))) + " · measured " +
		span(max(0, age)) + " ago · " + against + st.Muted.Render(" · bits = Σ −log2 p(value | its predictor)")}
	if len(ch.Surprising) == 0 {
		return append(out, st.Muted.Render("  none in the window")), nil
	}
	for _, r := range ch.Surprising {
		var because []string
		for _, c := range r.Because {
			s := sanitize.String(c.Field) + " " + formatFloat(c.Bits, 1)
			if c.Broke != "" {
				s += st.Bad.Render(" breaks " + sanitize.String(c.Broke) + "→" + sanitize.String(c.Field))
			}
			because = append(because, s)
		}
		lead := padLeft(formatFloat(r.Bits, 1), 6) + " bits  line " + padRight(count(r.Line), 8) + " "
		if r.Time != 0 && v.w >= 100 {
			// Where there is room: when, in log time (enter shows the
			// file and the whole line).
			lead += time.Unix(0, r.Time).UTC().Format("15:04:05.000") + " "
		}
		conds := []model.Cond{{Line: r.Line}}
		for k, val := range r.Record {
			conds = append(conds, model.Cond{Field: k, Value: val})
		}
		items = append(items, driftItem{line: len(out), title: "the surprising record of line " + count(r.Line), conds: conds})
		out = append(out, ansiFit(st.Warn.Render(lead)+joinFit(because, " · ", v.w-sanitize.Width(lead)), v.w))
		out = append(out, "        "+st.Muted.Render(sanitize.Fit(recordText(r), v.w-8)))
	}
	return out, items
}

// recordText writes a surprising record's values, the fields that made it
// surprising first, then the rest by name: field=value …
func recordText(r model.SurprisingRecord) string {
	seen := map[string]bool{}
	var parts []string
	for _, c := range r.Because {
		if v, ok := r.Record[c.Field]; ok && !seen[c.Field] {
			parts = append(parts, c.Field+"="+v)
			seen[c.Field] = true
		}
	}
	rest := make([]string, 0, len(r.Record))
	for k := range r.Record {
		if !seen[k] {
			rest = append(rest, k)
		}
	}
	sort.Strings(rest)
	for _, k := range rest {
		parts = append(parts, k+"="+r.Record[k])
	}
	return strings.Join(parts, " ")
}

// signed writes a change in bits with its sign: +0.310, -0.050.
func signed(x float64) string {
	s := formatFloat(math.Abs(x), 3)
	if x < 0 && s != "0.000" {
		return "-" + s
	}
	return "+" + s
}

// signedZ writes a z-score with its sign, "—" while there is none.
func signedZ(z float64) string {
	if z == 0 {
		return "—"
	}
	s := formatFloat(math.Abs(z), 1)
	if z < 0 && s != "0.0" {
		return "-" + s
	}
	return "+" + s
}
