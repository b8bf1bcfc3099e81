package ui

import (
	"sort"
	"strings"

	"github.com/charmbracelet/bubbles/key"
	"github.com/charmbracelet/bubbles/textinput"
	tea "github.com/charmbracelet/bubbletea"

	"bitsift/model"
	"bitsift/sanitize"
)

// fieldCol is a column of the Fields screen.
type fieldCol int

const (
	colName fieldCol = iota
	colKind
	colEntropy
	colDistinct
	colBest
	colLeft
	colBytes
	colTrend
	numCols
)

var colTitles = [numCols]string{"FIELD", "KIND", "BITS", "DISTINCT", "BEST GIVEN", "LEFT bits", "B/rec", "TREND"}

// trendSpan is how many history samples the trend column sorts by.
const trendSpan = 30

// fieldsLayout is the column widths at the current size.
type fieldsLayout struct {
	name, kind, bar, best, trend int
	longKinds                    bool
}

// fieldsView is the Fields screen: one row per field.
type fieldsView struct {
	env    *env
	w, h   int
	lay    fieldsLayout
	rows   []int // indices into the snapshot's fields: filtered and sorted
	cursor int
	offset int
	sel    string // the field under the cursor, kept across frames
	by     fieldCol
	asc    bool

	filter    textinput.Model
	filtering bool
}

func newFieldsView(e *env) fieldsView {
	ti := textinput.New()
	ti.Prompt = "/"
	ti.Placeholder = "part of a field name"
	ti.CharLimit = 64
	return fieldsView{env: e, by: colEntropy, filter: ti}
}

// capturing says whether keys go to the filter box.
func (v fieldsView) capturing() bool { return v.filtering }

func (v fieldsView) setSize(w, h int) fieldsView {
	v.w, v.h = w, h
	v.filter.Width = max(10, w-20)
	// Fixed: cursor and change marks 3, kind 5, entropy figure 6,
	// distinct 9, left 5, bytes 6, gaps 7.
	free := w - 41
	l := fieldsLayout{kind: 5}
	if free >= 70 {
		l.kind, l.longKinds = 11, true
		free -= 6
	}
	l.bar = max(4, min(16, free/6))
	l.trend = max(6, min(40, free/4))
	rest := free - l.bar - l.trend
	l.name = max(8, min(32, rest*11/20))
	l.best = max(6, min(28, rest-l.name))
	// Give what is left over to the names (long ones are common), then to
	// the trend, which fills one cell a second: a wide one stays empty.
	more := max(0, free-l.bar-l.trend-l.name-l.best)
	grow := min(more, 48-l.name)
	l.name, more = l.name+max(0, grow), more-max(0, grow)
	grow = min(more, 40-l.best)
	l.best, more = l.best+max(0, grow), more-max(0, grow)
	l.trend = min(60, l.trend+more)
	v.lay = l
	return v.clamp()
}

// listHeight is the rows of fields shown: the view less its header and
// footer lines.
func (v fieldsView) listHeight() int { return max(1, v.h-2) }

// refresh rebuilds the row order from the frame on show.
func (v fieldsView) refresh() fieldsView {
	f := v.env.frame
	if f == nil {
		return v
	}
	s := f.Snap
	q := strings.ToLower(v.filter.Value())
	v.rows = v.rows[:0]
	for i := range s.Fields {
		if q == "" || strings.Contains(strings.ToLower(s.Fields[i].Name), q) {
			v.rows = append(v.rows, i)
		}
	}
	less := v.less(s)
	sort.SliceStable(v.rows, func(a, b int) bool {
		fa, fb := &s.Fields[v.rows[a]], &s.Fields[v.rows[b]]
		if c := less(fa, fb); c != 0 {
			return (c < 0) == v.asc
		}
		return fa.Name < fb.Name
	})
	v.cursor = 0
	for i, r := range v.rows {
		if s.Fields[r].Name == v.sel {
			v.cursor = i
		}
	}
	return v.clamp()
}

// less compares two fields by the sort column: <0, 0, >0 for ascending
// order.
func (v fieldsView) less(s *model.Snapshot) func(a, b *model.FieldStats) int {
	cmpF := func(x, y float64) int {
		switch {
		case x < y:
			return -1
		case x > y:
			return 1
		}
		return 0
	}
	switch v.by {
	case colName:
		return func(a, b *model.FieldStats) int { return strings.Compare(a.Name, b.Name) }
	case colKind:
		return func(a, b *model.FieldStats) int { return strings.Compare(string(a.Kind), string(b.Kind)) }
	case colDistinct:
		return func(a, b *model.FieldStats) int { return a.Distinct - b.Distinct }
	case colBest:
		return func(a, b *model.FieldStats) int { return strings.Compare(a.BestGiven, b.BestGiven) }
	case colLeft:
		return func(a, b *model.FieldStats) int { return cmpF(a.Residual, b.Residual) }
	case colBytes:
		return func(a, b *model.FieldStats) int { return cmpF(a.BytesPerRecord, b.BytesPerRecord) }
	case colTrend:
		h := v.env.hist
		return func(a, b *model.FieldStats) int {
			ca, cb := h.change(a.Name, trendSpan), h.change(b.Name, trendSpan)
			return cmpF(abs(ca), abs(cb))
		}
	}
	return func(a, b *model.FieldStats) int { return cmpF(a.Entropy, b.Entropy) }
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

func (v fieldsView) clamp() fieldsView {
	v.cursor, v.offset = keepInView(v.cursor, v.offset, len(v.rows), v.listHeight())
	if f := v.env.frame; f != nil && v.cursor < len(v.rows) {
		v.sel = f.Snap.Fields[v.rows[v.cursor]].Name
	}
	return v
}

// changeMark is the mark of what changed in a field: ✗ it is the target
// of a broken rule, Δ its distribution shifted (flagged), else a space.
func (v fieldsView) changeMark(name string) string {
	f := v.env.frame
	if f == nil || f.Snap.Changes == nil {
		return " "
	}
	for _, b := range f.Snap.Changes.Broken {
		if b.Target == name {
			return v.env.st.Bad.Render("✗")
		}
	}
	for _, s := range f.Snap.Changes.Shifts {
		if s.Field == name && s.Flagged {
			return v.env.st.Warn.Render("Δ")
		}
	}
	return " "
}

// selected is the name of the field under the cursor, "" if none.
func (v fieldsView) selected() string { return v.sel }

// Update handles keys and the mouse wheel.
func (v fieldsView) Update(msg tea.Msg) (fieldsView, tea.Cmd) {
	k := v.env.keys
	if v.filtering {
		if km, ok := msg.(tea.KeyMsg); ok {
			switch km.Type {
			case tea.KeyEnter:
				v.filtering = false
				v.filter.Blur()
				return v.refresh(), nil
			case tea.KeyEsc:
				v.filtering = false
				v.filter.Blur()
				v.filter.SetValue("")
				return v.refresh(), nil
			}
		}
		var cmd tea.Cmd
		v.filter, cmd = v.filter.Update(msg)
		return v.refresh(), cmd
	}
	if s, ok := scrollOf(k, msg, v.listHeight()); ok {
		v.cursor = s.apply(v.cursor, len(v.rows))
		return v.clamp(), nil
	}
	km, ok := msg.(tea.KeyMsg)
	if !ok {
		return v, nil
	}
	switch {
	case key.Matches(km, k.Sort):
		v.by = (v.by + 1) % numCols
		v.asc = v.by == colName || v.by == colKind || v.by == colBest
		return v.refresh(), nil
	case key.Matches(km, k.Reverse):
		v.asc = !v.asc
		return v.refresh(), nil
	case key.Matches(km, k.Filter):
		v.filtering = true
		return v, v.filter.Focus()
	case key.Matches(km, k.Back):
		if v.filter.Value() != "" {
			v.filter.SetValue("")
			return v.refresh(), nil
		}
	case key.Matches(km, k.Open):
		if v.sel != "" {
			return v, open(v.sel, "")
		}
	}
	return v, nil
}

// View draws exactly h lines of w cells.
func (v fieldsView) View() string {
	st := v.env.st
	f := v.env.frame
	lines := make([]string, 0, v.h)
	lines = append(lines, v.header())
	if f == nil {
		lines = append(lines, st.Muted.Render("  waiting for the first records…"))
	} else {
		s := f.Snap
		end := min(len(v.rows), v.offset+v.listHeight())
		for i := v.offset; i < end; i++ {
			lines = append(lines, v.row(&s.Fields[v.rows[i]], i == v.cursor))
		}
		if len(v.rows) == 0 {
			lines = append(lines, st.Muted.Render("  no field matches the filter"))
		}
	}
	for len(lines) < v.h-1 {
		lines = append(lines, "")
	}
	lines = append(lines, v.footer())
	return strings.Join(lines[:v.h], "\n")
}

func (v fieldsView) header() string {
	l := v.lay
	t := colTitles
	if l.bar >= 10 {
		t[colEntropy] = "BITS of ceiling"
	}
	mark := func(c fieldCol, s string) string {
		if v.by != c {
			return s
		}
		if v.asc {
			return s + "▲"
		}
		return s + "▼"
	}
	cells := []string{
		"   " + padRight(mark(colName, t[colName]), l.name),
		padRight(mark(colKind, t[colKind]), l.kind),
		padRight(mark(colEntropy, t[colEntropy]), 6+l.bar),
		padLeft(mark(colDistinct, t[colDistinct]), 9),
		padRight(mark(colBest, t[colBest]), l.best),
		padLeft(mark(colLeft, "LEFT"), 5),
		padLeft(mark(colBytes, t[colBytes]), 6),
		padRight(mark(colTrend, t[colTrend]), l.trend),
	}
	return v.env.st.Header.Render(padRight(strings.Join(cells, " "), v.w))
}

var shortKinds = map[model.Kind]string{
	model.Constant: "const", model.Identifier: "ident", model.Derived: "deriv", model.Informative: "info",
}

func (v fieldsView) row(fs *model.FieldStats, cur bool) string {
	st := v.env.st
	l := v.lay
	kind := string(fs.Kind)
	if !l.longKinds {
		kind = shortKinds[fs.Kind]
	}
	if fs.Timestamp {
		kind = "time"
	}
	ceil := fs.Ceiling()
	frac := 0.0
	if ceil > 0 {
		frac = fs.Entropy / ceil
	}
	full, empty := barCells(frac, l.bar)
	best, left := "—", "—"
	if fs.BestGiven != "" {
		best = sanitize.Pad(fs.BestGiven, l.best)
		left = bits(fs.Residual)
	} else {
		best = padRight(best, l.best)
	}
	h := bits(fs.Entropy)
	if fs.Estimate {
		h = "~" + bits(fs.Entropy)
	}
	distinct := count(int64(fs.Distinct))
	if fs.Estimate {
		distinct = "≥" + distinct
	}
	spark := sparkline(v.env.hist.of(fs.Name), l.trend, 0.1)
	markS := " "
	if cur {
		markS = "▸"
	}
	markS += v.changeMark(fs.Name) + " "
	name := sanitize.Pad(fs.Name, l.name)
	if fs.Synthetic != nil {
		// Made by bitsift from another field, not in the log.
		name = sanitize.Pad("+"+fs.Name, l.name)
	}
	text := []string{
		markS + name,
		st.Kind[string(fs.Kind)].Render(padRight(kind, l.kind)),
		padLeft(h, 5) + " " + st.Bar.Render(full) + st.BarEmpty.Render(empty),
		padLeft(distinct, 9),
		best,
		padLeft(left, 5),
		padLeft(formatFloat(fs.BytesPerRecord, 1), 6),
		st.Spark.Render(spark),
	}
	row := strings.Join(text, " ")
	if cur {
		return st.Cursor.Render(padRight(row, v.w))
	}
	return row
}

func (v fieldsView) footer() string {
	st := v.env.st
	if v.filtering {
		return v.filter.View()
	}
	n := 0
	if f := v.env.frame; f != nil {
		n = len(f.Snap.Fields)
	}
	parts := []string{count(int64(len(v.rows))) + " of " + count(int64(n)) + " fields"}
	for _, r := range v.rows {
		if v.env.frame.Snap.Fields[r].Synthetic != nil {
			parts = append(parts, "+ made by bitsift")
			break
		}
	}
	if f := v.env.frame; f != nil && f.Snap.Changes != nil && (len(f.Snap.Changes.Broken) > 0 || len(f.Snap.Changes.Shifts) > 0) {
		parts = append(parts, "✗ rule broken · Δ shifted: see screen 4")
	}
	if q := v.filter.Value(); q != "" {
		parts = append(parts, "filter “"+sanitize.Fit(q, 20)+"” (esc clears)")
	}
	parts = append(parts, "s sort · S reverse · / filter · enter open")
	return st.Muted.Render(joinFit(parts, " · ", v.w))
}
