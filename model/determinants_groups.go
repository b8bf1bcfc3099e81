package model

import "math"

// The determinant search's groundwork (determinants.go): partitions of the
// searched records by the values of a set of fields, the columns they are
// read from, the work they cost, and the figures counted over a partition
// (H(target | set) from its groups).

// refine returns the partition of base (nil: all records in one group) by
// field a, then by field b (b < 0: none). nil when over the work cap.
func (d *detSearch) refine(base *partition, a, b int) *partition {
	if d.spend(d.n) {
		return nil
	}
	return d.partitionBy(base, a, b)
}

// partitionBy is refine without the work count.
func (d *detSearch) partitionBy(base *partition, a, b int) *partition {
	n := d.n
	ca := d.column(a)
	var cb []uint32
	if b >= 0 {
		cb = d.column(b)
	}
	group := make([]int32, n)
	var sizes []int32
	// Dense lookup of (left, right) → group+1 when the key space is small.
	left, right := 0, len(d.m.fields[a].counts)+1
	if base != nil {
		left = len(base.sizes)
	} else {
		left, right = right, len(d.m.fields[b].counts)+1
	}
	if left*right <= detDenseCells {
		d.spend(left * right) // clearing the lookup is work too
		if cap(d.lookup) < left*right {
			d.lookup = make([]int32, left*right)
		}
		look := d.lookup[:left*right]
		clear(look)
		fold := func(id uint32, k int) int {
			if id == overflow {
				return k - 1
			}
			return int(id)
		}
		for r := 0; r < n; r++ {
			var k int
			if base != nil {
				k = int(base.group[r])*right + fold(ca[r], right)
			} else {
				k = fold(ca[r], left)*right + fold(cb[r], right)
			}
			g := look[k] - 1
			if g < 0 {
				g = int32(len(sizes))
				look[k] = g + 1
				sizes = append(sizes, 0)
			}
			sizes[g]++
			group[r] = g
		}
		return &partition{group: group, sizes: sizes}
	}
	ids := make(map[uint64]int32)
	for r := 0; r < n; r++ {
		var k uint64
		if base != nil {
			k = uint64(base.group[r])<<32 | uint64(ca[r])
		} else {
			k = uint64(ca[r])<<32 | uint64(cb[r])
		}
		g, ok := ids[k]
		if !ok {
			g = int32(len(sizes))
			ids[k] = g
			sizes = append(sizes, 0)
		}
		sizes[g]++
		group[r] = g
	}
	return &partition{group: group, sizes: sizes}
}

// sort fills p's order and starts (jointS's group-by-group path needs
// them; they double a partition's memory, so only then).
func (p *partition) sort() {
	if p.order != nil {
		return
	}
	n, sizes, group := len(p.group), p.sizes, p.group
	p.starts = make([]int32, len(sizes)+1)
	for g, c := range sizes {
		p.starts[g+1] = p.starts[g] + c
	}
	next := append([]int32(nil), p.starts[:len(sizes)]...)
	p.order = make([]int32, n)
	for r, g := range group {
		p.order[next[g]] = int32(r)
		next[g]++
	}
}

// spend counts w more work, done or about to be done, and says whether
// the search is past its cap (then nothing more is counted: nothing more
// is done).
func (d *detSearch) spend(w int) bool {
	if d.cut {
		return true
	}
	d.work += w
	if d.work > detMaxWork || d.m.cancelled() {
		d.cut = true
	}
	return d.cut
}

// column returns field i's value ids, one per record searched, oldest
// first, read from the store's column (never whole rows). The candidates'
// columns are kept for the whole search, and so are the first targets'
// up to detKeptColumns in all; any other is decoded into a scratch buffer
// valid until the next such call. Each decoding counts as work.
func (d *detSearch) column(i int) []uint32 {
	if c, ok := d.cols[i]; ok {
		return c
	}
	d.spend(d.n)
	if d.isCand[i] || len(d.cols) < detKeptColumns {
		c := d.m.st.column(i, d.lo, d.lo+d.n, nil)
		d.cols[i] = c
		return c
	}
	d.tcol = d.m.st.column(i, d.lo, d.lo+d.n, d.tcol)
	return d.tcol
}

// tryTargets measures H(t|set) for each target outside set, keeps the
// determinants, and returns the figures measured.
func (d *detSearch) tryTargets(p *partition, set []int, targets []int) map[int]float64 {
	m, s := d.m, d.s
	n := float64(d.n)
	sx := 0.0
	for _, c := range p.sizes {
		sx += clogf(c)
	}
	got := map[int]float64{}
	var xh *countHist
	for _, t := range targets {
		skip := false
		for _, g := range set {
			skip = skip || g == t
		}
		if skip || d.coveredFor(t, set) || d.spend(d.n) {
			continue
		}
		h := nonNeg((sx - d.jointS(p, t)) / n)
		got[t] = h
		ft := &s.Fields[t]
		ht := d.entropy(t)
		if h > DerivedMaxResidual || h > 0.1*ht || ht <= 0 {
			continue
		}
		if xh == nil {
			v := histOf(int32s(p.sizes))
			xh = &v
		}
		emi, approx := expectedMI(d.hist(t), *xh)
		rfi := (ht - h - emi) / ht
		if rfi < DerivedMinRFI {
			continue
		}
		names := make([]string, len(set))
		for i, g := range set {
			names[i] = m.fields[g].name
		}
		d.found[t] = append(d.found[t], append([]int(nil), set...))
		d.out = append(d.out, Determinant{Target: ft.Name, Given: names, Bits: round9(h), RFI: round9(rfi), EMIApprox: approx})
	}
	return got
}

// jointS is Σ c·log2 c over the cells (group, value of t): one pass over
// the records into a dense table when groups × values is small, else group
// by group along the partition's order.
func (d *detSearch) jointS(p *partition, t int) float64 {
	col := d.column(t)
	k := len(d.m.fields[t].counts) + 1 // ids 0..len-1, and overflow folded to the last
	fold := func(id uint32) int {
		if id == overflow {
			return k - 1
		}
		return int(id)
	}
	sxf := 0.0
	if cells := len(p.sizes) * k; cells <= detDenseCells {
		d.spend(cells) // clearing and summing the table is work too
		if cap(d.dense) < cells {
			d.dense = make([]int32, cells)
		}
		tab := d.dense[:cells]
		clear(tab)
		for r, g := range p.group {
			tab[int(g)*k+fold(col[r])]++
		}
		for _, c := range tab {
			sxf += clogf(c)
		}
		return sxf
	}
	if len(d.scrat) < k {
		d.scrat = make([]int32, k)
	}
	p.sort()
	for g := range p.sizes {
		for _, r := range p.order[p.starts[g]:p.starts[g+1]] {
			id := fold(col[r])
			if d.scrat[id] == 0 {
				d.touch = append(d.touch, int32(id))
			}
			d.scrat[id]++
		}
		for _, id := range d.touch {
			sxf += clogf(d.scrat[id])
			d.scrat[id] = 0
		}
		d.touch = d.touch[:0]
	}
	return sxf
}

func clogf(c int32) float64 {
	if c <= 1 {
		return 0
	}
	x := float64(c)
	return x * math.Log2(x)
}

func int32s(v []int32) []int {
	out := make([]int, len(v))
	for i, x := range v {
		out[i] = int(x)
	}
	return out
}

// whole says the search covers the whole window.
func (d *detSearch) whole() bool {
	return d.n == d.m.st.n
}

// subsetCounts is field t's count vector over the records searched,
// absent included.
func (d *detSearch) subsetCounts(t int) []int {
	tab := make([]int, len(d.m.fields[t].counts)+1)
	k := len(tab)
	for _, id := range d.column(t) {
		if id == overflow {
			tab[k-1]++
			continue
		}
		tab[id]++
	}
	out := tab[:0]
	for _, c := range tab {
		if c > 0 {
			out = append(out, c)
		}
	}
	return out
}

// hist is field t's count histogram over the records searched.
func (d *detSearch) hist(t int) countHist {
	if h, ok := d.fHists[t]; ok {
		return h
	}
	var h countHist
	if d.whole() {
		h = histOf(d.m.fieldCounts(d.m.fields[t]))
	} else {
		h = histOf(d.subsetCounts(t))
	}
	d.fHists[t] = h
	return h
}

// entropy is H(t) in bits over the records searched: the snapshot's figure
// for the whole window, else from t's counts over them.
func (d *detSearch) entropy(t int) float64 {
	if d.whole() {
		return d.s.Fields[t].Entropy
	}
	if h, ok := d.hs[t]; ok {
		return h
	}
	sx := 0.0
	for _, c := range d.subsetCounts(t) {
		sx += clogf(int32(c))
	}
	n := float64(d.n)
	h := nonNeg(math.Log2(n) - sx/n)
	d.hs[t] = h
	return h
}
