package model

import "sort"

// Detail is the distribution of one field F given each of the most frequent
// values of another field G, read from the pair table of (F, G): the data of
// a "field up close" view.
type Detail struct {
	Field string // F
	Given string // G
	// Rows are the most frequent values of G, most frequent first, each with
	// the most frequent values of F among the records with that value.
	Rows []DetailRow
	// OtherRecords counts the window records whose value of G is not in
	// Rows.
	OtherRecords int
}

// DetailRow is F's distribution among the records where G has one value.
type DetailRow struct {
	Given ValueCount // the value of G and how many window records have it
	// Top holds the most frequent values of F among those records, most
	// frequent first; their counts sum to at most Given.Count.
	Top []ValueCount
	// Entropy is H(F | G = Given.Value) in bits, over all of F's values in
	// the row (not only those in Top).
	Entropy float64
}

// Rest is the number of records in the row whose value of F is not in Top.
func (r *DetailRow) Rest() int {
	n := r.Given.Count
	for _, v := range r.Top {
		n -= v.Count
	}
	return n
}

// Default sizes of a Detail.
const (
	defaultDetailRows = 8
	defaultDetailTop  = 5
)

// detail builds the Detail of field f given field g (indices into m.fields)
// from their pair table; nil when the pair is not tracked. It costs O(cells
// of the pair table + values of G).
func (m *Model) detail(fi, gi, rows, top int) *Detail {
	if fi == gi {
		return nil
	}
	m.realizePairs()
	a, b := min(fi, gi), max(fi, gi)
	pi, ok := m.pairAt[[2]int{a, b}]
	if !ok {
		return nil
	}
	f, g := m.fields[fi], m.fields[gi]
	d := &Detail{Field: f.name, Given: g.name}
	// The most frequent values of G, absent included, by id.
	type gval struct {
		id    uint32
		count int
	}
	var gs []gval
	if ab := m.st.n - int(g.present); ab > 0 {
		gs = append(gs, gval{absent, ab})
	}
	for id, c := range g.counts {
		if id != absent && c > 0 {
			gs = append(gs, gval{uint32(id), int(c)})
		}
	}
	if g.overflowed > 0 {
		gs = append(gs, gval{overflow, int(g.overflowed)})
	}
	text := func(fl *field, id uint32) ValueCount {
		switch id {
		case absent:
			return ValueCount{Absent: true}
		case overflow:
			return ValueCount{Value: "(values past the cap)"}
		}
		return ValueCount{Value: fl.display(id)}
	}
	sort.Slice(gs, func(i, j int) bool {
		if gs[i].count != gs[j].count {
			return gs[i].count > gs[j].count
		}
		return text(g, gs[i].id).Value < text(g, gs[j].id).Value
	})
	if len(gs) > rows {
		gs = gs[:rows]
	}
	row := make(map[uint32]int, len(gs))
	for i, v := range gs {
		row[v.id] = i
		gv := text(g, v.id)
		gv.Count = v.count
		d.Rows = append(d.Rows, DetailRow{Given: gv})
	}
	cells := make([][]gval, len(gs))
	m.pairs[pi].m.each(func(k uint64, c int32) {
		ia, ib := uint32(k>>32), uint32(k)
		fid, gid := ia, ib
		if fi != a {
			fid, gid = ib, ia
		}
		if r, ok := row[gid]; ok {
			cells[r] = append(cells[r], gval{fid, int(c)})
		}
	})
	covered := 0
	for r := range d.Rows {
		dr := &d.Rows[r]
		covered += dr.Given.Count
		counts := make([]int, len(cells[r]))
		for i, c := range cells[r] {
			counts[i] = c.count
		}
		dr.Entropy = EntropyOfCounts(counts)
		cs := cells[r]
		sort.Slice(cs, func(i, j int) bool {
			if cs[i].count != cs[j].count {
				return cs[i].count > cs[j].count
			}
			return text(f, cs[i].id).Value < text(f, cs[j].id).Value
		})
		if len(cs) > top {
			cs = cs[:top]
		}
		for _, c := range cs {
			v := text(f, c.id)
			v.Count = c.count
			dr.Top = append(dr.Top, v)
		}
	}
	d.OtherRecords = m.st.n - covered
	return d
}
