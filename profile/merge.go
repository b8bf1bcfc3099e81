package profile

import (
	"fmt"
	"math"
	"sort"

	"bitsift/model"
)

// Merge adds profiles: the result counts every record of every profile,
// so that its figures are those of one run over all their inputs. Profiles
// must agree on their companions (a companion made differently is another
// field) and on their redaction (hashes under different keys never match);
// coverage that overlaps (the same file bytes, query or offsets twice) is
// refused, as those records would count twice.
//
// What is exact: every field's value table and every pair's cells, for
// fields that have full tables in every profile. A field that is an
// identifier in some profile has a summary there; the merged summary is
// exact while its sketch holds every value (Summary.Complete), an estimate
// past that. A pair is kept only where every profile holding both fields
// has its cells (a field that is an identifier in one shard has no pairs
// there). A field missing from a profile is absent from all its records.
func Merge(ps []*Profile) (*Profile, error) {
	if len(ps) == 0 {
		return nil, fmt.Errorf("nothing to merge")
	}
	out := &Profile{Schema: Schema, Format: ps[0].Format, TimeField: ps[0].TimeField, TimeFormat: ps[0].TimeFormat,
		Redaction: ps[0].Redaction, Companions: []Companion{}, Measured: "merge", RejectedExamples: []model.Rejection{}}
	comp := map[string]Companion{}
	var buckets []*Buckets
	for i, p := range ps {
		if err := sameRedaction(ps[0].Redaction, p.Redaction); err != nil {
			return nil, fmt.Errorf("profile %d: %w", i+1, err)
		}
		for _, c := range p.Companions {
			if o, ok := comp[c.Name]; ok && o != c {
				return nil, fmt.Errorf("profile %d makes %s as %q from %s; another as %q from %s: they cannot be added", i+1, c.Name, c.Method, c.Source, o.Method, o.Source)
			}
			comp[c.Name] = c
		}
		if p.Format != out.Format {
			out.Format = "mixed"
		}
		if i == 0 || p.Confidence < out.Confidence {
			out.Confidence = p.Confidence
		}
		if out.TimeField == "" {
			out.TimeField, out.TimeFormat = p.TimeField, p.TimeFormat
		}
		out.Coverage = append(out.Coverage, p.Coverage...)
		out.Lines += p.Lines
		out.Rejected += p.Rejected
		out.Parts += p.Parts
		out.Faults = append(out.Faults, p.Faults...)
		for _, r := range p.RejectedExamples {
			if len(out.RejectedExamples) < 20 {
				out.RejectedExamples = append(out.RejectedExamples, r)
			}
		}
		buckets = append(buckets, p.Buckets)
	}
	if err := checkOverlap(out.Coverage); err != nil {
		return nil, err
	}
	for _, c := range comp {
		out.Companions = append(out.Companions, c)
	}
	sort.Slice(out.Companions, func(i, j int) bool { return out.Companions[i].Name < out.Companions[j].Name })
	out.Buckets = AddBuckets(buckets...)
	tables := make([]*model.CountTables, len(ps))
	for i, p := range ps {
		tables[i] = p.Counts
	}
	out.Counts = MergeCounts(tables)
	return out, nil
}

func sameRedaction(a, b *Redaction) error {
	switch {
	case a == nil && b == nil:
		return nil
	case a == nil || b == nil:
		return fmt.Errorf("one profile is redacted and another is not: their values cannot be matched")
	case a.KeyID != b.KeyID:
		return fmt.Errorf("profiles redacted with different keys cannot be added (use the same --redact-key FILE for every shard)")
	case fmt.Sprint(a.Fields) != fmt.Sprint(b.Fields):
		return fmt.Errorf("profiles redact different fields (%v, %v)", a.Fields, b.Fields)
	}
	return nil
}

// checkOverlap refuses coverage that counts the same input twice.
func checkOverlap(cov []Coverage) error {
	type key struct {
		kind, source string
		part         int32
	}
	by := map[key][]Coverage{}
	for _, c := range cov {
		k := key{c.Kind, c.Source, -1}
		if c.Partition != nil {
			k.part = *c.Partition
		}
		by[k] = append(by[k], c)
	}
	for k, cs := range by {
		sort.Slice(cs, func(i, j int) bool { return cs[i].From < cs[j].From })
		for i := 1; i < len(cs); i++ {
			a, b := cs[i-1], cs[i]
			if k.kind == "query" {
				if a.Query == b.Query && a.Since == b.Since && a.Until == b.Until {
					return fmt.Errorf("two profiles cover the same query on %s: their records would count twice", k.source)
				}
				continue
			}
			if b.From < a.To {
				return fmt.Errorf("two profiles cover %s from %d to %d: those records would count twice", b.String(), b.From, min(a.To, b.To))
			}
		}
	}
	return nil
}

// mergedField gathers one field across tables.
type mergedField struct {
	fc      model.FieldCounts
	index   map[string]uint32 // value → index + 1
	summary bool
	tables  []int // tables holding the field
}

// MergeCounts adds count tables (see Merge).
func MergeCounts(ts []*model.CountTables) *model.CountTables {
	out := &model.CountTables{}
	var order []string
	fields := map[string]*mergedField{}
	for ti, t := range ts {
		out.Records += t.Records
		if t.Oldest != 0 && (out.Oldest == 0 || t.Oldest < out.Oldest) {
			out.Oldest = t.Oldest
		}
		out.Newest = max(out.Newest, t.Newest)
		for _, f := range t.Fields {
			m := fields[f.Name]
			if m == nil {
				m = &mergedField{index: map[string]uint32{}}
				m.fc = model.FieldCounts{Name: f.Name, Synthetic: f.Synthetic, Tracked: true, Values: []string{}, Counts: []int64{}}
				fields[f.Name] = m
				order = append(order, f.Name)
			}
			m.tables = append(m.tables, ti)
			m.fc.Bytes += f.Bytes
			m.fc.Ident = m.fc.Ident || f.Ident
			m.fc.Timestamp = m.fc.Timestamp || f.Timestamp
			m.fc.Tracked = m.fc.Tracked && f.Tracked
			m.summary = m.summary || f.Summary != nil
			for i, v := range f.Values {
				m.add(v, f.Counts[i])
			}
		}
	}
	for _, name := range order {
		m := fields[name]
		m.fc.Absent = out.Records - m.present()
		if m.summary {
			m.fc.Summary = mergeSummaries(ts, name)
			m.fc.Tracked = false
			keepTop(&m.fc)
			m.fc.Absent = out.Records - m.fc.Summary.Present
		}
		out.Fields = append(out.Fields, m.fc)
	}
	out.Pairs = mergePairs(ts, fields)
	return out
}

func (m *mergedField) add(v string, c int64) {
	i, ok := m.index[v]
	if !ok {
		m.fc.Values = append(m.fc.Values, v)
		m.fc.Counts = append(m.fc.Counts, 0)
		i = uint32(len(m.fc.Values))
		m.index[v] = i
	}
	m.fc.Counts[i-1] += c
}

// present is the records with the field, from the full tables (a summary
// keeps its own).
func (m *mergedField) present() int64 {
	var n int64
	for _, c := range m.fc.Counts {
		n += c
	}
	return n
}

// keepTop cuts a summarised field's values to its most frequent.
func keepTop(fc *model.FieldCounts) {
	type vc struct {
		v string
		c int64
	}
	vs := make([]vc, len(fc.Values))
	for i := range fc.Values {
		vs[i] = vc{fc.Values[i], fc.Counts[i]}
	}
	sort.Slice(vs, func(i, j int) bool {
		if vs[i].c != vs[j].c {
			return vs[i].c > vs[j].c
		}
		return vs[i].v < vs[j].v
	})
	if len(vs) > model.SummaryTop {
		vs = vs[:model.SummaryTop]
	}
	fc.Values, fc.Counts = fc.Values[:0], fc.Counts[:0]
	for _, x := range vs {
		fc.Values = append(fc.Values, x.v)
		fc.Counts = append(fc.Counts, x.c)
	}
}

// mergeSummaries adds a field's summaries, turning full tables into
// complete summaries first. The result's absent count is set by the
// caller's table from Present.
func mergeSummaries(ts []*model.CountTables, name string) *model.Summary {
	k := 0
	complete, estimate := true, false
	var present int64
	byHash := map[uint64]int64{}
	var floor uint64 = math.MaxUint64 // hashes at or past the smallest cut are unknown
	for _, t := range ts {
		for _, f := range t.Fields {
			if f.Name != name {
				continue
			}
			s := f.Summary
			if s == nil {
				s = toSummary(&f)
			}
			if k == 0 || s.K < k {
				k = s.K
			}
			complete = complete && s.Complete
			estimate = estimate || s.Estimate
			present += s.Present
			for i, h := range s.Hashes {
				byHash[h] += s.Counts[i]
			}
			if !s.Complete && len(s.Hashes) > 0 && s.Hashes[len(s.Hashes)-1] < floor {
				floor = s.Hashes[len(s.Hashes)-1]
			}
		}
	}
	hs := make([]uint64, 0, len(byHash))
	for h := range byHash {
		if complete || h <= floor {
			hs = append(hs, h)
		}
	}
	sort.Slice(hs, func(i, j int) bool { return hs[i] < hs[j] })
	out := &model.Summary{K: k, Present: present, Estimate: estimate}
	if complete && len(hs) <= k {
		out.Complete = true
	}
	if len(hs) > k {
		hs = hs[:k]
	}
	var cl float64
	for _, h := range hs {
		c := byHash[h]
		out.Hashes = append(out.Hashes, h)
		out.Counts = append(out.Counts, c)
		if c > 1 {
			cl += float64(c) * math.Log2(float64(c))
		}
	}
	if out.Complete {
		out.Distinct, out.CLogC = int64(len(hs)), cl
		return out
	}
	// KMV: with the k-th smallest of D uniform hashes at u (as a fraction of
	// the hash range), D ≈ (k−1)/u; the sample's values are a uniform sample
	// of the distinct values, so Σ c·log2 c ≈ D · its mean over the sample.
	out.Estimate = true
	if n := len(hs); n > 1 {
		u := (float64(hs[n-1]) + 1) / math.Exp2(64)
		d := float64(n-1) / u
		out.Distinct = int64(math.Round(d))
		out.CLogC = cl / float64(n) * d
	} else {
		out.Distinct = int64(len(hs))
	}
	return out
}

// toSummary makes a complete summary of a full value table.
func toSummary(f *model.FieldCounts) *model.Summary {
	s := &model.Summary{K: math.MaxInt32, Complete: true}
	type hc struct {
		h uint64
		c int64
	}
	all := make([]hc, 0, len(f.Values))
	for i, v := range f.Values {
		all = append(all, hc{model.SketchHash(v), f.Counts[i]})
		s.Present += f.Counts[i]
	}
	sort.Slice(all, func(i, j int) bool { return all[i].h < all[j].h })
	for _, x := range all {
		s.Hashes = append(s.Hashes, x.h)
		s.Counts = append(s.Counts, x.c)
	}
	s.Distinct = int64(len(all))
	return s
}

// cell is a pair's cell by merged value indices (+1, 0 absent).
type cell struct{ i, j uint32 }

// mergePairs adds the pairs every table holding both fields has.
func mergePairs(ts []*model.CountTables, fields map[string]*mergedField) []model.PairCounts {
	type pkey struct{ a, b string }
	cells := map[pkey]map[cell]int64{}
	have := map[pkey]int{} // tables that hold the pair
	var keys []pkey
	for _, t := range ts {
		names := map[string]bool{}
		for _, f := range t.Fields {
			names[f.Name] = true
		}
		for _, p := range t.Pairs {
			a, b := fields[p.A], fields[p.B]
			if a.summary || b.summary {
				continue
			}
			k := pkey{p.A, p.B}
			if _, ok := cells[k]; !ok {
				if _, ok := cells[pkey{p.B, p.A}]; ok {
					k = pkey{p.B, p.A}
				} else {
					cells[k] = map[cell]int64{}
					keys = append(keys, k)
				}
			}
			have[k]++
			fa, fb := fieldByName(t, p.A), fieldByName(t, p.B)
			for x := range p.N {
				i, j := a.idOf(fa, p.I[x]), b.idOf(fb, p.J[x])
				if k.a != p.A {
					i, j = j, i
				}
				cells[k][cell{i, j}] += p.N[x]
			}
		}
		// A table lacking a field adds its records as (value, absent) cells
		// of the pairs with it: filled in below, once the pairs are known.
	}
	var out []model.PairCounts
	for _, k := range keys {
		a, b := fields[k.a], fields[k.b]
		ok := true
		for _, t := range ts {
			ha, hb := fieldByName(t, k.a) != nil, fieldByName(t, k.b) != nil
			switch {
			case ha && hb:
				ok = ok && hasPair(t, k.a, k.b)
			case ha:
				addAbsentSide(cells[k], t, fieldByName(t, k.a), a, false)
			case hb:
				addAbsentSide(cells[k], t, fieldByName(t, k.b), b, true)
			default:
				cells[k][cell{0, 0}] += t.Records
			}
		}
		if !ok {
			continue
		}
		pc := model.PairCounts{A: k.a, B: k.b}
		for c, n := range cells[k] {
			pc.I, pc.J, pc.N = append(pc.I, c.i), append(pc.J, c.j), append(pc.N, n)
		}
		out = append(out, pc)
	}
	return out
}

// addAbsentSide adds a table's records of one field as cells with the
// other field absent; bSide says the field is the pair's second.
func addAbsentSide(cells map[cell]int64, t *model.CountTables, f *model.FieldCounts, m *mergedField, bSide bool) {
	var present int64
	for x, v := range f.Values {
		id := m.index[v]
		present += f.Counts[x]
		if bSide {
			cells[cell{0, id}] += f.Counts[x]
		} else {
			cells[cell{id, 0}] += f.Counts[x]
		}
	}
	cells[cell{0, 0}] += t.Records - present
}

func (m *mergedField) idOf(f *model.FieldCounts, i uint32) uint32 {
	if i == 0 {
		return 0
	}
	return m.index[f.Values[i-1]]
}

func fieldByName(t *model.CountTables, name string) *model.FieldCounts {
	for i := range t.Fields {
		if t.Fields[i].Name == name {
			return &t.Fields[i]
		}
	}
	return nil
}

func hasPair(t *model.CountTables, a, b string) bool {
	for _, p := range t.Pairs {
		if (p.A == a && p.B == b) || (p.A == b && p.B == a) {
			return true
		}
	}
	return false
}
