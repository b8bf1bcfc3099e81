package model

import (
	"math"
	"sort"
	"strconv"
)

// Profile is what a baseline knows of a window: per field its distribution
// (the most frequent values, capped, with an "other" remainder; quantile
// bins for numeric fields with many values) and the dependencies that held,
// with their mappings. It is carried in the JSON report ("profile"), so a
// saved report can be the baseline of a later run (--baseline FILE).
type Profile struct {
	// Source says where the profile came from: "window", "pinned",
	// "rolling" or a file name.
	Source  string         `json:"source,omitempty"`
	Records int            `json:"records"`
	Fields  []FieldProfile `json:"fields"`
	Rules   []Rule         `json:"rules"`
	// through is Model.seen when the profile was taken: its records are
	// the through−Records .. through−1 ever added (0 for a file).
	through int64
}

// Profile caps: values per field and given values per rule. A rule's
// mapping past the cap is cut (Truncated), most frequent given values kept.
const (
	ProfileTopValues  = 64
	ProfileRuleValues = 256
	profileBins       = 16
)

// FieldProfile is one field's distribution in a profile.
type FieldProfile struct {
	Name      string  `json:"name"`
	Kind      Kind    `json:"kind"`
	Entropy   float64 `json:"entropy_bits"`
	Distinct  int     `json:"distinct"`
	BestGiven string  `json:"best_given,omitempty"`
	Absent    int     `json:"absent"`
	// Top holds up to ProfileTopValues values, most frequent first; Other
	// counts the records with any other value (absent not included).
	Top   []ProfileValue `json:"top"`
	Other int            `json:"other"`
	// Bins, for a numeric field with more values than Top holds, are
	// quantile bins of the values.
	Bins *Bins `json:"bins,omitempty"`
}

// ProfileValue is a value and its record count.
type ProfileValue struct {
	Value string `json:"value"`
	Count int    `json:"count"`
}

// Bins is a histogram of a numeric field: Counts[i] counts values v with
// Edges[i−1] < v ≤ Edges[i] (no lower bound for i = 0, no upper bound for
// the last count): len(Counts) == len(Edges)+1.
type Bins struct {
	Edges  []float64 `json:"edges"`
	Counts []int     `json:"counts"`
}

// Rule is a dependency that held in the profile's window: H(Target|Given)
// was at most DerivedMaxResidual bits with RFI ≥ DerivedMinRFI (the derived
// rule). Map lists, for each value of Given, the value of Target it came
// with (the most frequent one) and how many records had that Given value.
type Rule struct {
	Target    string      `json:"target"`
	Given     string      `json:"given"`
	Bits      float64     `json:"bits"`
	RFI       float64     `json:"rfi"`
	Map       []RuleValue `json:"map"`
	Truncated bool        `json:"truncated,omitempty"`
}

// RuleValue is one line of a rule's mapping.
type RuleValue struct {
	Given  string `json:"given"`
	Target string `json:"target"`
	Absent bool   `json:"target_absent,omitempty"`
	Count  int    `json:"count"`
}

// Field returns the named field's profile, or nil.
func (p *Profile) Field(name string) *FieldProfile {
	for i := range p.Fields {
		if p.Fields[i].Name == name {
			return &p.Fields[i]
		}
	}
	return nil
}

// buildProfile profiles the window; s is a snapshot of it (for kinds and
// the derived rule).
func (m *Model) buildProfile(s *Snapshot) *Profile {
	p := &Profile{Source: "window", Records: m.st.n, through: m.seen, Rules: []Rule{}}
	for i, f := range m.fields {
		fs := &s.Fields[i]
		fp := FieldProfile{
			Name: f.name, Kind: fs.Kind, Entropy: round9(fs.Entropy), Distinct: fs.Distinct,
			BestGiven: fs.BestGiven, Absent: m.st.n - int(f.present), Top: []ProfileValue{},
		}
		listed := 0
		if !f.hashed() {
			for _, v := range m.top(f, ProfileTopValues+1) {
				if v.Absent || len(fp.Top) >= ProfileTopValues {
					continue
				}
				fp.Top = append(fp.Top, ProfileValue{v.Value, v.Count})
				listed += v.Count
			}
			if fs.Distinct > ProfileTopValues {
				fp.Bins = m.numericBins(f)
			}
		}
		fp.Other = int(f.present) - listed
		p.Fields = append(p.Fields, fp)
	}
	for _, pr := range m.pairs {
		for _, dir := range [][2]int{{pr.a, pr.b}, {pr.b, pr.a}} {
			t, g := dir[0], dir[1]
			if !s.Determines(g, t) || m.fields[g].text == nil {
				// A Given whose values are kept only as hashes (a field
				// that looked like an identifier once) would list every
				// value as "", a mapping no reader can follow.
				continue
			}
			p.Rules = append(p.Rules, m.ruleOf(s, pr, t, g))
		}
	}
	sort.Slice(p.Rules, func(i, j int) bool {
		a, b := p.Rules[i], p.Rules[j]
		if a.Target != b.Target {
			return a.Target < b.Target
		}
		return a.Given < b.Given
	})
	return p
}

// ruleOf reads the mapping Given → Target off a pair table.
func (m *Model) ruleOf(s *Snapshot, pr pair, t, g int) Rule {
	type best struct {
		f, c, n int32
		g       uint32
	}
	by := map[uint32]*best{}
	pr.m.each(func(k uint64, c int32) {
		ia, ib := uint32(k>>32), uint32(k)
		gi, ti := ia, ib
		if g == pr.b {
			gi, ti = ib, ia
		}
		if gi == absent {
			return // records lacking Given are not part of the rule
		}
		b := by[gi]
		if b == nil {
			b = &best{g: gi}
			by[gi] = b
		}
		b.n += c
		if c > b.c {
			b.f, b.c = int32(ti), c
		}
	})
	r := Rule{Target: m.fields[t].name, Given: m.fields[g].name, Bits: round9(s.Cond(t, g)), RFI: round9(s.RFI(t, g))}
	// In an order of their own, not the map's: ties of count and text
	// (values whose text is not kept) went out in a different order on
	// each run.
	bs := make([]*best, 0, len(by))
	for _, b := range by {
		bs = append(bs, b)
	}
	sort.Slice(bs, func(i, j int) bool { return bs[i].g < bs[j].g })
	for _, b := range bs {
		r.Map = append(r.Map, RuleValue{
			Given: m.valueText(g, b.g), Target: m.valueText(t, uint32(b.f)),
			Absent: b.f == absent, Count: int(b.n),
		})
	}
	sort.SliceStable(r.Map, func(i, j int) bool {
		if r.Map[i].Count != r.Map[j].Count {
			return r.Map[i].Count > r.Map[j].Count
		}
		if r.Map[i].Given != r.Map[j].Given {
			return r.Map[i].Given < r.Map[j].Given
		}
		return r.Map[i].Target < r.Map[j].Target
	})
	if len(r.Map) > ProfileRuleValues {
		r.Map, r.Truncated = r.Map[:ProfileRuleValues], true
	}
	return r
}

// valueText is the text of value id of field i ("" for absent and for
// values not kept as text).
func (m *Model) valueText(i int, id uint32) string {
	f := m.fields[i]
	if id == absent || id == overflow || f.text == nil || int(id) >= len(f.text) {
		return ""
	}
	return f.text[id]
}

// numericBins returns quantile bins of f's values when every value is a
// finite number, else nil.
func (m *Model) numericBins(f *field) *Bins {
	if f.overflowed > 0 {
		return nil
	}
	var vals []string
	var counts []int64
	for id := 1; id < len(f.counts); id++ {
		if c := f.counts[id]; c > 0 {
			vals = append(vals, f.text[id])
			counts = append(counts, int64(c))
		}
	}
	return numericBinsOf(vals, counts)
}

// numericBinsOf returns quantile bins of a value table when every value is
// a finite number, else nil.
func numericBinsOf(values []string, counts []int64) *Bins {
	type vc struct {
		v float64
		c int
	}
	var vals []vc
	total := 0
	for i, s := range values {
		c := int(counts[i])
		if c == 0 {
			continue
		}
		x, err := strconv.ParseFloat(s, 64)
		if err != nil || math.IsInf(x, 0) || math.IsNaN(x) {
			return nil
		}
		vals = append(vals, vc{x, c})
		total += c
	}
	if total == 0 {
		return nil
	}
	sort.Slice(vals, func(i, j int) bool { return vals[i].v < vals[j].v })
	b := &Bins{}
	cum, k := 0, 1
	for _, x := range vals {
		cum += x.c
		for k < profileBins && cum*profileBins >= k*total {
			if len(b.Edges) == 0 || b.Edges[len(b.Edges)-1] != x.v {
				b.Edges = append(b.Edges, x.v)
			}
			k++
		}
	}
	if n := len(b.Edges); n > 0 && b.Edges[n-1] == vals[len(vals)-1].v {
		b.Edges = b.Edges[:n-1] // the last bin must not be empty by construction
	}
	b.Counts = make([]int, len(b.Edges)+1)
	for _, x := range vals {
		b.Counts[binOf(b.Edges, x.v)] += x.c
	}
	return b
}

// binOf is the bin of x (see Bins).
func binOf(edges []float64, x float64) int {
	return sort.SearchFloat64s(edges, x)
}

func round9(x float64) float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return 0
	}
	return math.Round(x*1e9) / 1e9
}
