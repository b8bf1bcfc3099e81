package ui

import (
	"sort"

	"bitsift/model"
	"bitsift/sanitize"
)

// valuePair is one line of a heat-map cell's breakdown: a value of the
// row field and a value of the column field, and how many window records
// carry both.
type valuePair struct {
	row, col model.ValueCount
	n        int
}

// cellPairs is the breakdown of the cell under the cursor: the value pairs
// of (row, column) the frame's Detail carries, most records first; nil
// until a frame carries the Detail of this cell.
func (v pairsView) cellPairs(s *model.Snapshot) []valuePair {
	d := s.Detail
	if d == nil || d.Field != v.selR || d.Given != v.selC || v.selR == v.selC {
		return nil
	}
	var out []valuePair
	for _, r := range d.Rows {
		for _, tv := range r.Top {
			out = append(out, valuePair{row: tv, col: r.Given, n: tv.Count})
		}
	}
	sort.SliceStable(out, func(a, b int) bool { return out[a].n > out[b].n })
	return out
}

// pairRows is how many value pairs the panel lists.
func (v pairsView) pairRows() int { return max(2, min(8, v.h-20)) }

// pairValue is a value as the breakdown shows it.
func pairValue(vc model.ValueCount) string {
	switch {
	case vc.Absent:
		return "(absent)"
	case vc.Value == "":
		return "(empty)"
	}
	return sanitize.String(vc.Value)
}

// breakdown is the panel's list of value pairs, the one enter opens marked.
func (v pairsView) breakdown(s *model.Snapshot, pw int) []string {
	st := v.env.st
	head := st.Header.Render("VALUE PAIRS") + st.Muted.Render(" [ ] pick · enter: lines")
	ps := v.cellPairs(s)
	if ps == nil {
		return []string{ansiFit(head, pw-1), st.Muted.Render("with the next frame…")}
	}
	out := []string{ansiFit(head, pw-1)}
	pick := min(v.pick, len(ps)-1)
	from := max(0, pick-v.pairRows()+1)
	for i := from; i < min(len(ps), from+v.pairRows()); i++ {
		p := ps[i]
		mark := "  "
		if i == pick {
			mark = "▸ "
		}
		n := count(int64(p.n))
		// The two values share the room left of the count; the shorter
		// one gives what it does not need to the other.
		room := max(8, pw-2-len(mark)-len(n)-1-5)
		rv, cv := pairValue(p.row), pairValue(p.col)
		rw := min(sanitize.Width(rv), max(room/2, room-sanitize.Width(cv)))
		line := mark + letter(v.r) + "=" + sanitize.Fit(rv, rw) + " " + letter(v.c) + "=" + sanitize.Fit(cv, max(4, room-rw))
		line = padRight(line, pw-2-len(n)) + " " + n
		if i == pick {
			line = st.Cursor.Render(line)
		}
		out = append(out, line)
	}
	return out
}

// pickedConds is the lines behind the value pair under the breakdown's
// cursor: a title and the conditions row = a, column = b.
func (v pairsView) pickedConds(s *model.Snapshot) (string, []model.Cond, bool) {
	ps := v.cellPairs(s)
	if len(ps) == 0 {
		return "", nil, false
	}
	p := ps[min(v.pick, len(ps)-1)]
	title := sanitize.String(v.selR) + "=" + pairValue(p.row) + " · " + sanitize.String(v.selC) + "=" + pairValue(p.col)
	return title, []model.Cond{
		{Field: v.selR, Value: p.row.Value, Absent: p.row.Absent},
		{Field: v.selC, Value: p.col.Value, Absent: p.col.Absent},
	}, true
}
