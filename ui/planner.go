package ui

import (
	"maps"
	"sort"
	"strings"
	"time"

	"github.com/charmbracelet/bubbles/key"
	tea "github.com/charmbracelet/bubbletea"

	"bitsift/plan"
	"bitsift/sanitize"
)

// plannerView is the Plan screen: the drop plan plan.Choose makes of the
// frame on show, per field what it does and what that costs, with the
// user's pins; its totals estimated from the model at once, and measured
// (plan.Make on a copy of the newest raw lines, zstd) in the background.
// The caution is always on it.
type plannerView struct {
	env  *env
	w, h int

	// pins are the user's choices; ver counts their changes. The map is
	// replaced, never changed in place, so a measurement running on
	// another goroutine keeps the copy it was given.
	pins map[string]plan.Pin
	ver  int
	// recPins are the user's choices for record classes, by class, kept
	// the same way.
	recPins map[string]plan.Pin

	cur    *plan.Plan // chosen from the frame on show
	rows   []int      // indices into cur.Fields, in display order
	cursor int
	offset int
	sel    string // the field (or recSel+class) under the cursor, kept across frames

	meas      *plan.Plan // the last measured plan, nil before one
	measVer   int        // the pins it was made for
	measErr   error
	measAt    time.Time
	measuring bool
}

func newPlannerView(e *env) plannerView {
	return plannerView{env: e, pins: map[string]plan.Pin{}, recPins: map[string]plan.Pin{}}
}

// recSel marks a record class in sel: no field name starts with NUL.
const recSel = "\x00rec:"

// reds are the record classes of the last measurement, shown after the
// fields.
func (v plannerView) reds() []plan.Reduction {
	if v.meas == nil {
		return nil
	}
	return v.meas.Reductions
}

// entries is the length of the list: fields, then record classes.
func (v plannerView) entries() int { return len(v.rows) + len(v.reds()) }

func (v plannerView) setSize(w, h int) plannerView {
	v.w, v.h = w, h
	return v.clamp()
}

// samplingCaution is the screen's line on record sampling.
const samplingCaution = "Sampling deletes whole records, gone for audits and investigations: " +
	"defer to your retention policy."

// caution is the caution wrapped to the width, and the line on sampling
// when record classes are on show.
func (v plannerView) caution() []string {
	c := wrapWords(plan.Caution, v.w-2)
	if len(v.reds()) > 0 {
		c = append(c, wrapWords(samplingCaution, v.w-2)...)
	}
	return c
}

// plannerHead is the lines above the rows: three of totals, one of
// columns.
const plannerHead = 4

// listHeight is the rows of fields shown.
func (v plannerView) listHeight() int { return max(1, v.h-plannerHead-2-len(v.caution())) }

// options are the plan options for the pins.
func (v plannerView) options() plan.Options {
	o := plan.Options{Pins: maps.Clone(v.pins), RecordPins: maps.Clone(v.recPins)}
	if f := v.env.frame; f != nil {
		o.RecordTimes = f.Snap.Input.TimeField != ""
	}
	return o
}

// refresh chooses the plan again from the frame on show (about 80 µs).
func (v plannerView) refresh() plannerView {
	f := v.env.frame
	if f == nil {
		return v
	}
	v.cur = plan.Choose(f.Snap, v.options())
	order := map[plan.Action]int{plan.Drop: 0, plan.Derive: 1, plan.Keep: 2}
	v.rows = v.rows[:0]
	for i := range v.cur.Fields {
		v.rows = append(v.rows, i)
	}
	fs := v.cur.Fields
	sort.SliceStable(v.rows, func(a, b int) bool {
		fa, fb := &fs[v.rows[a]], &fs[v.rows[b]]
		if order[fa.Action] != order[fb.Action] {
			return order[fa.Action] < order[fb.Action]
		}
		if fa.BytesPerRecord != fb.BytesPerRecord {
			return fa.BytesPerRecord > fb.BytesPerRecord
		}
		return fa.Name < fb.Name
	})
	return v.reselect()
}

// reselect puts the cursor back on the entry it was on.
func (v plannerView) reselect() plannerView {
	v.cursor = 0
	for i, r := range v.rows {
		if v.cur.Fields[r].Name == v.sel {
			v.cursor = i
		}
	}
	for i, r := range v.reds() {
		if recSel+r.Class == v.sel {
			v.cursor = len(v.rows) + i
		}
	}
	return v.clamp()
}

func (v plannerView) clamp() plannerView {
	v.cursor, v.offset = keepInView(v.cursor, v.offset, v.entries(), v.listHeight())
	switch {
	case v.cur != nil && v.cursor < len(v.rows):
		v.sel = v.cur.Fields[v.rows[v.cursor]].Name
	case v.cursor >= len(v.rows) && v.cursor < v.entries():
		v.sel = recSel + v.reds()[v.cursor-len(v.rows)].Class
	}
	return v
}

// due says whether a measurement should start now, and marks it started:
// none is running, and there is none yet, or the pins changed since, or
// the last is older than every.
func (v plannerView) due(every time.Duration) (plannerView, bool) {
	if v.measuring || v.cur == nil || v.cur.Records == 0 {
		return v, false
	}
	fresh := v.env.now().Sub(v.measAt) < every
	if (v.meas != nil || v.measErr != nil) && v.measVer == v.ver && fresh {
		return v, false
	}
	v.measuring = true
	return v, true
}

// measured takes the end of a measurement.
func (v plannerView) measured(ver int, p *plan.Plan, err error) plannerView {
	v.measuring, v.measVer, v.measAt, v.measErr = false, ver, v.env.now(), err
	if err == nil {
		v.meas = p
	}
	if v.cur == nil {
		return v
	}
	return v.reselect()
}

// pin sets the pin of the field under the cursor and chooses again; on a
// record class, + keeps the class whole and x reduces it even with
// findings, measured again in the background.
func (v plannerView) pin(p plan.Pin) plannerView {
	if class, ok := strings.CutPrefix(v.sel, recSel); ok {
		if v.recPins[class] == p {
			return v
		}
		pins := maps.Clone(v.recPins)
		if p == plan.Unpinned {
			delete(pins, class)
		} else {
			pins[class] = p
		}
		v.recPins = pins
		v.ver++
		return v
	}
	if v.sel == "" || v.pins[v.sel] == p {
		return v
	}
	pins := maps.Clone(v.pins)
	if p == plan.Unpinned {
		delete(pins, v.sel)
	} else {
		pins[v.sel] = p
	}
	v.pins = pins
	v.ver++
	return v.refresh()
}

// Update handles the cursor and the pin keys.
func (v plannerView) Update(msg tea.Msg) (plannerView, tea.Cmd) {
	k := v.env.keys
	if s, ok := scrollOf(k, msg, v.listHeight()); ok {
		v.cursor = s.apply(v.cursor, v.entries())
		return v.clamp(), nil
	}
	km, ok := msg.(tea.KeyMsg)
	if !ok {
		return v, nil
	}
	switch {
	case key.Matches(km, k.Keep):
		return v.pin(plan.PinKeep), nil
	case key.Matches(km, k.Drop):
		return v.pin(plan.PinDrop), nil
	case key.Matches(km, k.Unpin):
		return v.pin(plan.Unpinned), nil
	case key.Matches(km, k.Open):
		if v.sel != "" && !strings.HasPrefix(v.sel, recSel) {
			return v, open(v.sel, "")
		}
	}
	return v, nil
}

// planCols are the widths of the Plan screen's columns.
type planCols struct{ name, from, why int }

func (v plannerView) cols() planCols {
	// Fixed: mark 2, pin 4, action 6, H 6, lost 6, B/rec 6, gaps 7.
	free := max(24, v.w-37)
	c := planCols{name: max(10, min(28, free*3/10)), from: max(8, min(24, free/5))}
	c.why = max(0, free-c.name-c.from-2)
	return c
}

// View draws exactly h lines.
func (v plannerView) View() string {
	st := v.env.st
	if v.cur == nil {
		return fill([]string{st.Muted.Render("  waiting for the first records…")}, v.h)
	}
	lines := v.totals()
	c := v.cols()
	head := "  " + padRight("FIELD", c.name) + " " + padRight("PIN", 4) + " " + padRight("ACTION", 6) + " " +
		padRight("FROM", c.from) + " " + padLeft("H bits", 6) + " " + padLeft("LOST", 6) + " " + padLeft("B/rec", 6)
	if c.why > 0 {
		head += "  " + padRight("WHY", c.why)
	}
	lines = append(lines, st.Header.Render(padRight(head, v.w)))
	end := min(v.entries(), v.offset+v.listHeight())
	reds := v.reds()
	for i := v.offset; i < end; i++ {
		if i < len(v.rows) {
			lines = append(lines, v.row(&v.cur.Fields[v.rows[i]], i == v.cursor, c))
		} else {
			lines = append(lines, v.recRow(&reds[i-len(v.rows)], i == v.cursor, c))
		}
	}
	if len(v.rows) == 0 {
		lines = append(lines, st.Muted.Render("  no fields of the log to plan for"))
	}
	foot := v.footer()
	caution := v.caution()
	keep := max(0, v.h-1-len(caution))
	for len(lines) < keep {
		lines = append(lines, "")
	}
	lines = append(lines[:keep], foot)
	for _, l := range caution {
		lines = append(lines, " "+st.Warn.Render(l))
	}
	return fill(lines, v.h)
}

// totals are the two lines of what the plan does and saves.
func (v plannerView) totals() []string {
	st := v.env.st
	p := v.cur
	var nd, nv, fieldBytes float64
	for _, f := range p.Fields {
		fieldBytes += f.BytesPerRecord
		switch f.Action {
		case plan.Drop:
			nd++
		case plan.Derive:
			nv++
		}
	}
	kind := st.Good.Render("lossless")
	if !p.Lossless {
		kind = st.Warn.Render("lossy, ≤ " + bits(p.BitsLost) + " bits/record lost")
	}
	first := st.Title.Render("PLAN") + "  " + kind + " · drop " + count(int64(nd)) + " · derive " + count(int64(nv)) +
		" · keep " + count(int64(len(p.Fields))-int64(nd+nv)) + " of " + count(int64(len(p.Fields))) + " fields" +
		" · H " + formatFloat(p.EntropyAfter, 1) + " of " + formatFloat(p.EntropyBefore, 1) + " bits/rec"
	second := "estimated: saves " + formatFloat(p.EstimatedSaving, 1) + " of " + formatFloat(fieldBytes, 1) +
		" B/record of field text (" + percent(share(p.EstimatedSaving, fieldBytes)) + ")"
	return []string{ansiFit(first, v.w), ansiFit(second, v.w), ansiFit(v.measuredText(), v.w)}
}

// measuredText says what the last measurement found, or why there is none.
func (v plannerView) measuredText() string {
	st := v.env.st
	m := v.meas
	switch {
	case m == nil && v.measuring:
		return st.Muted.Render("measuring with zstd…")
	case m == nil && v.measErr != nil:
		return st.Muted.Render("not measured: " + sanitize.String(v.measErr.Error()))
	case m == nil || m.Measured == nil:
		return st.Muted.Render("not measured yet")
	}
	mm := m.Measured
	s := mm.Saved()
	raw, zst := percent(share(s.Raw, mm.Before.Raw)), percent(share(s.Compressed, mm.Before.Compressed))
	perDay := ""
	if d, ok := m.SavedPerDay(); ok {
		perDay = ", " + plan.Bytes(d.Compressed) + "/day after zstd"
	}
	var tail, styledTail string
	if mm.Mismatches > 0 {
		tail = " · " + count(int64(mm.Mismatches)) + " mismatches"
		styledTail = st.Bad.Render(tail)
	}
	again, short := "", ""
	switch {
	case v.measVer != v.ver:
		again, short = " · before the last pin, measuring again…", " · old pins, measuring…"
	case v.measuring:
		again, short = " · measuring again…", " · measuring…"
	}
	// The longest wording that fits the width: the saving figures stay
	// whole at 80 columns, the byte counts go first.
	forms := []string{
		"measured on " + count(int64(mm.Records)) + " records: saves " + formatFloat(s.Raw, 1) + " of " +
			formatFloat(mm.Before.Raw, 1) + " B raw (" + raw + "), " + formatFloat(s.Compressed, 1) + " of " +
			formatFloat(mm.Before.Compressed, 1) + " B zstd (" + zst + ")" + perDay,
		"measured on " + count(int64(mm.Records)) + " records: saves " + raw + " raw, " + zst + " zstd" + perDay,
		"measured, " + count(int64(mm.Records)) + " rec: saves " + raw + " raw, " + zst + " zstd" + perDay,
	}
	t := forms[len(forms)-1]
	for _, f := range forms {
		if sanitize.Width(f+tail+short) <= v.w {
			t = f
			if sanitize.Width(f+tail+again) > v.w {
				again = short
			}
			break
		}
	}
	if again != "" {
		return st.Muted.Render(t + tail + again)
	}
	return t + styledTail
}

func share(part, whole float64) float64 {
	if whole <= 0 {
		return 0
	}
	return part / whole
}

func (v plannerView) row(f *plan.Field, cur bool, c planCols) string {
	st := v.env.st
	mark := "  "
	if cur {
		mark = "▸ "
	}
	action := string(f.Action)
	style := st.Text
	switch f.Action {
	case plan.Drop:
		style = st.Bad
	case plan.Derive:
		style = st.Kind["derived"]
	}
	from := "—"
	if len(f.From) > 0 {
		from = strings.Join(f.From, "+")
	}
	pin := f.Pin.String()
	if pin == "" {
		pin = "·"
	}
	line := mark + sanitize.Pad(f.Name, c.name) + " " + padRight(pin, 4) + " " + style.Render(padRight(action, 6)) + " " +
		sanitize.Pad(from, c.from) + " " + padLeft(bits(f.Entropy), 6) + " " + padLeft(bits(f.BitsLost), 6) + " " +
		padLeft(formatFloat(f.BytesPerRecord, 1), 6)
	if c.why > 0 {
		line += "  " + st.Muted.Render(sanitize.Fit(f.Reason, c.why))
	}
	if cur {
		return st.Cursor.Render(padRight(ansiStrip(line), v.w))
	}
	return line
}

// recRow draws a record class: its action and rate in ACTION and FROM,
// its share of records under H, the bits it loses per record under LOST,
// the bytes it saves per record (raw) under B/rec, and its findings.
func (v plannerView) recRow(r *plan.Reduction, cur bool, c planCols) string {
	st := v.env.st
	mark := "  "
	if cur {
		mark = "▸ "
	}
	pin := r.Pin
	if p, ok := v.recPins[r.Class]; ok || v.measVer != v.ver {
		pin = p
	}
	pinText := map[plan.Pin]string{plan.Unpinned: "·", plan.PinKeep: "keep", plan.PinDrop: "cut"}[pin]
	action := string(r.Action)
	style := st.Bad
	why := "routine: " + formatFloat(r.Ratio, 2) + "× the stream's bits/byte"
	if r.Action == plan.CollapseRecords {
		why = "repeats within a minute"
	}
	applied := pin == plan.PinDrop || pin == plan.Unpinned && r.Findings == 0
	if r.Action == plan.CollapseRecords {
		action = "dedup"
	}
	if !applied {
		style, action = st.Muted, "kept"
	}
	if r.Findings > 0 {
		why = "⚠ " + count(int64(r.Findings)) + " findings: " + strings.Join(r.FindingExamples, "; ")
	}
	line := mark + sanitize.Pad("rec "+r.Class, c.name) + " " + padRight(pinText, 4) + " " + style.Render(padRight(action, 6)) + " " +
		padRight("1/"+formatFloat(r.KeepOneIn, 0), c.from) + " " + padLeft(percent(r.ShareRecords), 6) + " " +
		padLeft(bits(r.BitsLostPerRecord), 6) + " " + padLeft(formatFloat(r.Saved.Raw, 1), 6)
	if c.why > 0 {
		ws := st.Muted
		if r.Findings > 0 {
			ws = st.Warn
		}
		line += "  " + ws.Render(sanitize.Fit(why, c.why))
	}
	if cur {
		return st.Cursor.Render(padRight(ansiStrip(line), v.w))
	}
	return line
}

func (v plannerView) footer() string {
	parts := []string{"+ keep · x drop · u unpin the field under the cursor", "LOST: H(F|FROM) bits/record"}
	if len(v.reds()) > 0 {
		parts = append(parts, "rec: a class of records to sample or dedup (H: its share, B/rec: saved)")
	}
	if n := len(v.pins) + len(v.recPins); n > 0 {
		parts = append(parts, count(int64(n))+" pinned")
	}
	return v.env.st.Muted.Render(joinFit(parts, " · ", v.w))
}

// wrapWords breaks text into lines of at most w cells at spaces.
func wrapWords(text string, w int) []string {
	w = max(w, 20)
	var lines []string
	line := ""
	for _, word := range strings.Fields(text) {
		switch {
		case line == "":
			line = word
		case sanitize.Width(line)+1+sanitize.Width(word) <= w:
			line += " " + word
		default:
			lines = append(lines, line)
			line = word
		}
	}
	if line != "" {
		lines = append(lines, line)
	}
	return lines
}
