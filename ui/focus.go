package ui

import (
	"math"
	"sort"
	"strings"

	"github.com/charmbracelet/bubbles/key"
	"github.com/charmbracelet/bubbles/viewport"
	tea "github.com/charmbracelet/bubbletea"

	"bitsift/model"
	"bitsift/sanitize"
)

// focusView is the screen of one field up close: its top values, their
// surprisal, its entropy over time, and its distribution given each value
// of its best predictor (or of the field it was opened against).
type focusView struct {
	env   *env
	w, h  int
	field string
	given string // "" for the best predictor
	// auto: no field was chosen, so the view follows the most informative
	// one as the figures settle.
	auto bool
	vp   viewport.Model
	// sel is the top value under the cursor (↑ ↓; enter opens its
	// lines) of shownValues, the top values the page lists.
	sel         int
	shownValues []model.ValueCount
}

func newFocusView(e *env) focusView {
	return focusView{env: e, vp: viewport.New(0, 0)}
}

func (v focusView) setSize(w, h int) focusView {
	v.w, v.h = w, h
	v.vp.Width, v.vp.Height = w, h
	return v.refresh()
}

// show switches to a field, given another ("" for its best predictor).
func (v focusView) show(field, given string) focusView {
	if field != v.field || given != v.given {
		v.vp.GotoTop()
	}
	v.field, v.given, v.auto = field, given, field == ""
	return v.refresh()
}

// refresh rebuilds the page from the frame on show; View only draws it.
func (v focusView) refresh() focusView {
	f := v.env.frame
	if f == nil {
		v.vp.SetContent(v.env.st.Muted.Render("  waiting for the first records…"))
		return v
	}
	s := f.Snap
	if v.field == "" || v.auto || s.Index(v.field) < 0 {
		v.field, v.given, v.auto = firstInformative(s), "", true
	}
	if v.field == "" {
		v.vp.SetContent(v.env.st.Muted.Render("  no fields yet"))
		return v
	}
	v.shownValues = v.topShown(&s.Fields[s.Index(v.field)])
	v.sel = max(0, min(v.sel, len(v.shownValues)-1))
	v.vp.SetContent(strings.Join(v.page(s), "\n"))
	return v
}

// topShown is the top values the page lists, as many as the height lets.
func (v focusView) topShown(fs *model.FieldStats) []model.ValueCount {
	top := fs.Top
	if k := max(4, (v.h-10)/2); len(top) > k {
		top = top[:k]
	}
	return top
}

// nextGiven shows the field given the next (d = 1) or previous field
// measured with it, in name order: the "given" changes without going back
// to Pairs.
func (v focusView) nextGiven(d int) focusView {
	f := v.env.frame
	if f == nil {
		return v
	}
	s := f.Snap
	i := s.Index(v.field)
	if i < 0 {
		return v
	}
	var names []string
	for j := range s.Fields {
		if j != i && s.HasPair(i, j) {
			names = append(names, s.Fields[j].Name)
		}
	}
	if len(names) == 0 {
		return v
	}
	sort.Strings(names)
	cur := v.given
	if cur == "" {
		cur = s.Fields[i].BestGiven
	}
	k := sort.SearchStrings(names, cur)
	if k < len(names) && names[k] == cur {
		k = (k + d + len(names)) % len(names)
	} else if d < 0 {
		k = (k - 1 + len(names)) % len(names)
	} else {
		k %= len(names)
	}
	v.given = names[k]
	return v.refresh()
}

// firstInformative is the field with the most entropy short of the
// identifiers, else the first field.
func firstInformative(s *model.Snapshot) string {
	best, bh := "", -1.0
	for i := range s.Fields {
		f := &s.Fields[i]
		if f.Kind != model.Identifier && f.Entropy > bh {
			best, bh = f.Name, f.Entropy
		}
	}
	if best == "" && len(s.Fields) > 0 {
		best = s.Fields[0].Name
	}
	return best
}

// step moves to the previous or next field by name.
func (v focusView) step(d int) focusView {
	f := v.env.frame
	if f == nil || len(f.Snap.Fields) == 0 {
		return v
	}
	names := make([]string, len(f.Snap.Fields))
	for i := range f.Snap.Fields {
		names[i] = f.Snap.Fields[i].Name
	}
	sort.Strings(names)
	i := sort.SearchStrings(names, v.field)
	i = (i + d + len(names)) % len(names)
	return v.show(names[i], "")
}

// Update handles keys and the mouse wheel.
func (v focusView) Update(msg tea.Msg) (focusView, tea.Cmd) {
	k := v.env.keys
	if km, ok := msg.(tea.KeyMsg); ok {
		switch {
		case key.Matches(km, k.Left):
			return v.step(-1), nil
		case key.Matches(km, k.Right):
			return v.step(1), nil
		case key.Matches(km, k.NextGiven):
			return v.nextGiven(1), nil
		case key.Matches(km, k.PrevGiven):
			return v.nextGiven(-1), nil
		case key.Matches(km, k.Open) && len(v.shownValues) > 0:
			tv := v.shownValues[min(v.sel, len(v.shownValues)-1)]
			title := sanitize.String(v.field) + "=" + sanitize.String(tv.Value)
			if tv.Absent {
				title = "records without " + sanitize.String(v.field)
			}
			return v, openLines(title, []model.Cond{{Field: v.field, Value: tv.Value, Absent: tv.Absent}})
		case (key.Matches(km, k.Up) || key.Matches(km, k.Down)) && len(v.shownValues) > 0:
			s, _ := scrollOf(k, msg, v.h)
			v.sel = s.apply(v.sel, len(v.shownValues))
			return v.refresh(), nil
		}
	}
	if s, ok := scrollOf(k, msg, v.h); ok {
		scrollViewport(&v.vp, s)
		return v, nil
	}
	return v, nil
}

// View draws exactly h lines.
func (v focusView) View() string { return fill(strings.Split(v.vp.View(), "\n"), v.h) }

func (v focusView) page(s *model.Snapshot) []string {
	st := v.env.st
	fi := s.Index(v.field)
	fs := &s.Fields[fi]
	w := v.w
	name := sanitize.Fit(fs.Name, max(8, w/3))
	facts := []string{
		st.Kind[string(fs.Kind)].Render(string(fs.Kind)),
		bits(fs.Entropy) + " bits of " + bits(fs.Ceiling()) + " ceiling",
		count(int64(fs.Distinct)) + " values",
		formatFloat(fs.BytesPerRecord, 1) + " B/record",
	}
	if fs.Estimate {
		facts[2] = "≥" + facts[2] + " (estimate)"
	}
	out := []string{st.Title.Render(name) + "  " + joinFit(facts, " · ", w-sanitize.Width(name)-2)}
	switch {
	case fs.BestGiven != "":
		out = append(out, st.Muted.Render(ansiFit("best given "+sanitize.String(fs.BestGiven)+": "+bits(fs.Residual)+
			" bits left, U = "+formatFloat(fs.Uncertainty, 2)+"  ·  ←/→ other fields · [ ] other given · enter: lines", w)))
	case fs.Kind == model.Identifier:
		out = append(out, st.Muted.Render(ansiFit("an identifier: nearly every value is new, so it is not measured against other fields", w)))
	default:
		out = append(out, st.Muted.Render(ansiFit("no other field is measured against this one", w)))
	}
	out = append(out, "")
	out = append(out, v.values(s, fs)...)
	out = append(out, "")
	out = append(out, v.overTime(fs)...)
	out = append(out, "")
	out = append(out, v.byGiven(s, fs)...)
	return out
}

// values is the table of the most frequent values.
func (v focusView) values(s *model.Snapshot, fs *model.FieldStats) []string {
	st := v.env.st
	vw := max(12, min(40, v.w/4))
	bw := max(8, min(40, v.w-vw-34))
	out := []string{st.Header.Render("  " + padRight("TOP VALUES", vw) + " " + padRight("share", bw) + " " + padLeft("p", 6) + "  " + "surprisal −log2 p")}
	n := float64(s.Records)
	if n == 0 {
		return append(out, st.Muted.Render("no records in the window"))
	}
	shown := 0
	// Leave room for the sections below on a small screen.
	top := v.topShown(fs)
	for i, tv := range top {
		p := float64(tv.Count) / n
		shown += tv.Count
		label := sanitize.Pad(tv.Value, vw)
		if tv.Absent {
			label = st.Muted.Render(padRight("(absent)", vw))
		} else if tv.Value == "" {
			label = st.Muted.Render(padRight("(empty)", vw))
		}
		full, empty := barCells(p, bw)
		row := label + " " + st.Bar.Render(full) + st.BarEmpty.Render(empty) + " " +
			padLeft(percent(p), 6) + "  " + padLeft(bits(-math.Log2(p)), 6) + " bits"
		if i == v.sel {
			// ▸ marks the cursor where colour does not show.
			row = st.Cursor.Render(padRight(ansiFit("▸ "+ansiStrip(row), v.w), v.w))
		} else {
			row = ansiFit("  "+row, v.w)
		}
		out = append(out, row)
	}
	if rest := s.Records - shown; rest > 0 {
		p := float64(rest) / n
		full, empty := barCells(p, bw)
		others := fs.Distinct - len(top)
		label := "rest: " + count(int64(others)) + " values"
		if fs.Estimate {
			label = "rest: many values"
		}
		out = append(out, "  "+st.Muted.Render(padRight(label, vw))+" "+st.BarEmpty.Render(full)+st.BarEmpty.Render(empty)+" "+padLeft(percent(p), 6))
	}
	return out
}

// overTime is the sparkline of the field's entropy.
func (v focusView) overTime(fs *model.FieldStats) []string {
	st := v.env.st
	h := v.env.hist.of(fs.Name)
	sw := max(10, v.w-2)
	head := "ENTROPY OVER TIME"
	if len(h) > 0 {
		lo, hi := h[0], h[0]
		for _, x := range h {
			lo, hi = math.Min(lo, x), math.Max(hi, x)
		}
		n := min(len(h), sw)
		head += "  last " + count(int64(n)) + " samples"
		if e := v.env.hist.every; e > 0 {
			head += " (every " + span(e) + ")"
		}
		head += " · " + bits(lo) + "–" + bits(hi) + " bits"
	}
	return []string{st.Header.Render(ansiFit(head, v.w)), st.Spark.Render(sparkline(h, sw, 0.1))}
}

// given is the distribution of the field given each top value of another.
func (v focusView) byGiven(s *model.Snapshot, fs *model.FieldStats) []string {
	st := v.env.st
	d := s.Detail
	if d == nil || d.Field != fs.Name {
		if fs.BestGiven == "" && v.given == "" {
			return nil
		}
		return []string{st.Muted.Render("the values given the other field come with the next frame…")}
	}
	fname, gname := sanitize.String(d.Field), sanitize.String(d.Given)
	head := fname + " given " + gname
	if gi := s.Index(d.Given); gi >= 0 {
		head += "  H(" + fname + "|" + gname + ") = " + bits(s.Cond(s.Index(d.Field), gi)) + " bits"
	}
	out := []string{st.Header.Render(ansiFit(head, v.w))}
	gw := max(8, min(24, v.w/5))
	n := float64(s.Records)
	for _, r := range d.Rows {
		label := sanitize.Pad(r.Given.Value, gw)
		if r.Given.Absent {
			label = st.Muted.Render(padRight("(absent)", gw))
		}
		lead := label + " " + padLeft(percent(float64(r.Given.Count)/n), 6) + "  H " + bits(r.Entropy) + "  "
		var vals []string
		for _, tv := range r.Top {
			name := sanitize.Fit(tv.Value, 24)
			if tv.Absent {
				name = "(absent)"
			}
			vals = append(vals, name+" "+percent(float64(tv.Count)/float64(r.Given.Count)))
		}
		if rest := r.Rest(); rest > 0 {
			vals = append(vals, "rest "+percent(float64(rest)/float64(r.Given.Count)))
		}
		out = append(out, lead+joinFit(vals, " · ", v.w-sanitize.Width(ansiStrip(lead))))
	}
	if d.OtherRecords > 0 {
		out = append(out, st.Muted.Render(ansiFit("other values of "+gname+": "+percent(float64(d.OtherRecords)/n)+" of records", v.w)))
	}
	return out
}
