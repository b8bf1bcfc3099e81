package sqlsrc

import (
	"context"
	"sort"

	"bitsift/companion"
	"bitsift/model"
	"bitsift/parse"
)

// builder gathers the rows of the counting query into count tables.
type builder struct {
	fs     []field
	paired map[int]bool
	single map[int]map[string]int64 // field → value → count
	absent map[int]int64
	cells  map[[2]int]map[[2]vkey]int64
}

// vkey is a value or absent (NULL).
type vkey struct {
	v      string
	absent bool
}

func keyOf(s *string) vkey {
	if s == nil {
		return vkey{absent: true}
	}
	return vkey{v: *s}
}

func newBuilder(fs []field, paired []int) *builder {
	b := &builder{fs: fs, paired: map[int]bool{}, single: map[int]map[string]int64{}, absent: map[int]int64{},
		cells: map[[2]int]map[[2]vkey]int64{}}
	for _, i := range paired {
		b.paired[i] = true
	}
	return b
}

func (b *builder) add(set [2]int, x, y *string, c int64) {
	if set[1] < 0 {
		if x == nil {
			b.absent[set[0]] += c
			return
		}
		m := b.single[set[0]]
		if m == nil {
			m = map[string]int64{}
			b.single[set[0]] = m
		}
		m[*x] += c
		return
	}
	m := b.cells[set]
	if m == nil {
		m = map[[2]vkey]int64{}
		b.cells[set] = m
	}
	m[[2]vkey{keyOf(x), keyOf(y)}] += c
}

// field is field i's table; n is the row count.
func (b *builder) field(i int, n int64) *model.FieldCounts {
	f := b.fs[i]
	fc := &model.FieldCounts{Name: f.name, Values: []string{}, Counts: []int64{}, Timestamp: f.time, Tracked: b.paired[i]}
	vals := sortedKeys(b.single[i])
	var present int64
	for _, v := range vals {
		c := b.single[i][v]
		fc.Values = append(fc.Values, v)
		fc.Counts = append(fc.Counts, c)
		fc.Bytes += int64(len(v)) * c
		present += c
	}
	fc.Absent = n - present
	return fc
}

// pairs returns the pair tables, their values indexed as in field.
func (b *builder) pairs() []model.PairCounts {
	index := map[int]map[string]uint32{}
	idx := func(i int, k vkey) uint32 {
		if k.absent {
			return 0
		}
		m := index[i]
		if m == nil {
			m = map[string]uint32{}
			for x, v := range sortedKeys(b.single[i]) {
				m[v] = uint32(x + 1)
			}
			index[i] = m
		}
		return m[k.v]
	}
	var sets [][2]int
	for s := range b.cells {
		sets = append(sets, s)
	}
	sort.Slice(sets, func(x, y int) bool {
		if sets[x][0] != sets[y][0] {
			return sets[x][0] < sets[y][0]
		}
		return sets[x][1] < sets[y][1]
	})
	var out []model.PairCounts
	for _, s := range sets {
		pc := model.PairCounts{A: b.fs[s[0]].name, B: b.fs[s[1]].name}
		for k, c := range b.cells[s] {
			pc.I = append(pc.I, idx(s[0], k[0]))
			pc.J = append(pc.J, idx(s[1], k[1]))
			pc.N = append(pc.N, c)
		}
		out = append(out, pc)
	}
	return out
}

// companionSample is how many rows the companion rules look at, as ingest
// looks at a stream's first lines.
const companionSample = 64

// companions adds the companion fields that are functions of a value
// (numeric buckets), made from the tables of their sources: a companion's
// table is its source's table with each value replaced by its label, and
// so are its pairs. A companion of an identifier (no full table) is left
// out.
func (r *run) companions(ctx context.Context, fs []field, ct *model.CountTables) error {
	rows, err := r.e.sample(ctx, r.from, fs, companionSample)
	if err != nil {
		return err
	}
	var recs []*parse.Record
	for _, row := range rows {
		rec := &parse.Record{}
		for i, v := range row {
			if v != nil {
				rec.AddString(fs[i].name, *v)
			}
		}
		recs = append(recs, rec)
	}
	basePairs := len(ct.Pairs)
	byName := map[string]int{}
	for i, f := range ct.Fields {
		byName[f.Name] = i
	}
	type made struct {
		src   int
		label []uint32 // source value index → companion value index (0 absent)
	}
	comps := map[string]made{}
	var order []string
	for _, comp := range companion.Choose(recs, companion.Options{}).List() {
		// Only companions whose value is a function of the source value
		// alone: numeric buckets. A template tree learns from messages in
		// order, which a table does not have.
		if _, ok := comp.(*companion.Buckets); !ok {
			continue
		}
		c := struct{ Name, Source, Method string }{comp.Name(), comp.Source(), comp.Method()}
		si, ok := byName[c.Source]
		if !ok || ct.Fields[si].Summary != nil {
			continue
		}
		if _, taken := byName[c.Name]; taken {
			continue
		}
		src := &ct.Fields[si]
		fc := model.FieldCounts{Name: c.Name, Values: []string{}, Counts: []int64{}, Absent: src.Absent,
			Tracked: src.Tracked, Synthetic: &model.Synthetic{Source: c.Source, Method: c.Method}}
		at := map[string]uint32{}
		label := make([]uint32, len(src.Values)+1)
		for x, v := range src.Values {
			l := string(comp.Value([]byte(v)))
			id, ok := at[l]
			if !ok {
				fc.Values = append(fc.Values, l)
				fc.Counts = append(fc.Counts, 0)
				id = uint32(len(fc.Values))
				at[l] = id
			}
			fc.Counts[id-1] += src.Counts[x]
			fc.Bytes += int64(len(l)) * src.Counts[x]
			label[x+1] = id
		}
		comps[c.Name] = made{si, label}
		order = append(order, c.Name)
		ct.Fields = append(ct.Fields, fc)
		byName[c.Name] = len(ct.Fields) - 1
		if fc.Tracked {
			// (source, companion): one cell per source value.
			pc := model.PairCounts{A: c.Source, B: c.Name}
			if src.Absent > 0 {
				pc.I, pc.J, pc.N = append(pc.I, 0), append(pc.J, 0), append(pc.N, src.Absent)
			}
			for x := range src.Values {
				pc.I, pc.J, pc.N = append(pc.I, uint32(x+1)), append(pc.J, label[x+1]), append(pc.N, src.Counts[x])
			}
			ct.Pairs = append(ct.Pairs, pc)
		}
	}
	// (companion, G) from (source, G), and (companion, companion') from
	// the pair of their sources.
	bySource := map[string]made{}
	for _, cn := range order {
		bySource[ct.Fields[comps[cn].src].Name] = comps[cn]
	}
	nameOf := map[string]string{}
	for _, cn := range order {
		nameOf[ct.Fields[comps[cn].src].Name] = cn
	}
	ident := func(i uint32) uint32 { return i }
	for _, p := range ct.Pairs[:basePairs] {
		ca, okA := bySource[p.A]
		cb, okB := bySource[p.B]
		la, lb := func(i uint32) uint32 { return ca.label[i] }, func(i uint32) uint32 { return cb.label[i] }
		if okA {
			ct.Pairs = append(ct.Pairs, mapPair(p, nameOf[p.A], p.B, la, ident))
		}
		if okB {
			ct.Pairs = append(ct.Pairs, mapPair(p, p.A, nameOf[p.B], ident, lb))
		}
		if okA && okB {
			ct.Pairs = append(ct.Pairs, mapPair(p, nameOf[p.A], nameOf[p.B], la, lb))
		}
	}
	return nil
}

// mapPair makes the pair (a, b) from the cells of p, its value indices
// mapped by fa and fb.
func mapPair(p model.PairCounts, a, b string, fa, fb func(uint32) uint32) model.PairCounts {
	cells := map[[2]uint32]int64{}
	for x := range p.N {
		cells[[2]uint32{fa(p.I[x]), fb(p.J[x])}] += p.N[x]
	}
	out := model.PairCounts{A: a, B: b}
	for k, c := range cells {
		out.I, out.J, out.N = append(out.I, k[0]), append(out.J, k[1]), append(out.N, c)
	}
	return out
}
