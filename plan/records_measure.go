package plan

import (
	"bytes"
	"fmt"
	"hash/fnv"
	"math"
	"sort"
	"strings"
	"time"

	"bitsift/companion"
)

// classes gathers, record by record of the measured sample, what the
// record reductions need: each field's value (interned per field; 0 is
// absent), the line's bytes, a hash of its fields but the time and
// identifier fields, and its minute.
type classes struct {
	h      recordHints
	json   bool
	fields []string // every non-ignored field of the plan
	fidx   map[string]int
	ids    []map[string]uint32
	texts  [][]string // per field: id-1 → value text
	rows   [][]uint32 // per record, per field
	bytes  []int
	dup    []uint64
	bucket []int64
	ignore map[string]bool
	// tmpl are the template companions, by their source field: the same
	// engine ingest runs (package companion), on the measured messages.
	tmpl      map[string]*companion.Templates
	synthetic map[int]bool // fields made here (templates): not counted as information
}

func newClasses(p *Plan, json bool) *classes {
	c := &classes{h: p.hints, json: json, fidx: map[string]int{}, ignore: map[string]bool{},
		tmpl: map[string]*companion.Templates{}, synthetic: map[int]bool{}}
	for _, f := range p.hints.ignore {
		c.ignore[f] = true
	}
	for _, f := range p.Fields {
		if !c.ignore[f.Name] {
			c.fidx[f.Name] = len(c.fields)
			c.fields = append(c.fields, f.Name)
			c.ids = append(c.ids, map[string]uint32{})
			c.texts = append(c.texts, nil)
		}
	}
	for _, src := range p.hints.templates {
		if _, ok := c.fidx[src]; !ok {
			continue
		}
		t := companion.NewTemplates(src)
		c.tmpl[src] = t
		c.synthetic[len(c.fields)] = true
		c.fidx[t.Name()] = len(c.fields)
		c.fields = append(c.fields, t.Name())
		c.ids = append(c.ids, map[string]uint32{})
		c.texts = append(c.texts, nil)
	}
	return c
}

// add takes one record: field → value text (JSON text for JSON input),
// and the bytes of its line as measured.
func (c *classes) add(rec map[string]string, n int) {
	row := make([]uint32, len(c.fields))
	var dup uint64
	for src, t := range c.tmpl {
		if v, ok := rec[src]; ok {
			i := c.fidx[t.Name()]
			id := string(t.Value([]byte(cellText(TableValue{Text: v}, c.json))))
			n, ok := c.ids[i][id]
			if !ok {
				c.texts[i] = append(c.texts[i], id)
				n = uint32(len(c.texts[i]))
				c.ids[i][id] = n
			}
			row[i] = n
		}
	}
	for k, v := range rec {
		i, ok := c.fidx[k]
		if !ok {
			continue
		}
		id, ok := c.ids[i][v]
		if !ok {
			c.texts[i] = append(c.texts[i], v)
			id = uint32(len(c.texts[i]))
			c.ids[i][v] = id
		}
		row[i] = id
		h := fnv.New64a()
		h.Write([]byte(k))
		h.Write([]byte{0})
		h.Write([]byte(v))
		dup += h.Sum64() // a sum: the same whatever the keys' order
	}
	bucket := int64(-1)
	if t, ok := rec[c.h.timeField]; ok {
		if ts, err := time.Parse(time.RFC3339Nano, cellText(TableValue{Text: t}, c.json)); err == nil {
			bucket = ts.Unix() / 60
		}
	}
	if bucket < 0 {
		bucket = int64(len(c.rows)) / 1000
	}
	c.rows = append(c.rows, row)
	c.bytes = append(c.bytes, n)
	c.dup = append(c.dup, dup)
	c.bucket = append(c.bucket, bucket)
}

// text is field i's value id as a model value reads (JSON strings without
// their quotes).
func (c *classes) text(i int, id uint32) string {
	if id == 0 {
		return ""
	}
	return cellText(TableValue{Text: c.texts[i][id-1]}, c.json)
}

// entropyMM is the Miller–Madow estimate of the entropy of the counts,
// bits: the plug-in entropy plus (K−1)/(2n ln 2) for K values seen in n
// records (Miller, 1955; from memory). The plug-in estimate alone falls
// short by about that much, the more so the smaller the class, which
// would make any small class look routine.
func entropyMM(counts map[uint32]int, n int) float64 {
	h := 0.0
	for _, k := range counts {
		p := float64(k) / float64(n)
		h -= p * math.Log2(p)
	}
	return h + float64(len(counts)-1)/(2*float64(n)*math.Ln2)
}

// measuredReduction, when set, is given the text a reduction leaves, as
// compressed: a seam for tests that compress it with the zstd tool.
var measuredReduction func(class string, kept []byte)

// debugClasses, when set, hears every candidate class and its figures.
var debugClasses func(string)

// candidate is a class being judged: records where the terms hold.
type candidate struct {
	terms   [][2]int // field index, value id
	members []int    // record indices
	bytes   int
	ratio   float64
	bits    float64 // Σ H(F|class) over the non-ignored fields
}

// findings marks the records that broke a rule or were among the most
// surprising, with a few words on each kind.
func (c *classes) findings() []string {
	why := make([]string, len(c.rows))
	n := len(c.rows)
	for _, r := range c.h.rules {
		g, f := c.fidx[r[0]], c.fidx[r[1]]
		counts := map[[2]uint32]int{}
		per := map[uint32]int{}
		for _, row := range c.rows {
			counts[[2]uint32{row[g], row[f]}]++
			per[row[g]]++
		}
		dom := map[uint32]uint32{}
		for k, cnt := range counts {
			if float64(cnt) >= dominantShare*float64(per[k[0]]) {
				dom[k[0]] = k[1]
			}
		}
		for i, row := range c.rows {
			if d, ok := dom[row[g]]; ok && d != row[f] && why[i] == "" {
				why[i] = fmt.Sprintf("%s=%s → %s=%s (mostly %s)", r[0], c.text(g, row[g]), r[1], c.text(f, row[f]), c.text(f, d))
			}
		}
	}
	for _, b := range c.h.broken {
		g, okg := c.fidx[b.Given]
		f, okf := c.fidx[b.Target]
		if !okg || !okf {
			continue
		}
		for _, ex := range b.Examples {
			for i, row := range c.rows {
				if why[i] == "" && c.text(g, row[g]) == ex.GivenValue && (row[f] == 0) == ex.TargetAbsent && c.text(f, row[f]) == ex.TargetValue {
					why[i] = fmt.Sprintf("breaks the baseline's %s → %s", b.Given, b.Target)
				}
			}
		}
	}
	for _, rec := range c.h.surprising {
		for i, row := range c.rows[:n] {
			if why[i] != "" {
				continue
			}
			match, any := true, false
			for k, v := range rec {
				if fi, ok := c.fidx[k]; ok {
					any = true
					if c.text(fi, row[fi]) != v {
						match = false
						break
					}
				}
			}
			if match && any {
				why[i] = "among the most surprising records"
			}
		}
	}
	return why
}

// candidates lists the one-value classes big enough to judge.
func (c *classes) candidates() []*candidate {
	n := len(c.rows)
	minN := max(minClassRecords, int(math.Ceil(MinClassShare*float64(n))))
	var cf []int
	for _, name := range c.h.classFields {
		if i, ok := c.fidx[name]; ok {
			cf = append(cf, i)
		}
	}
	for i := range c.synthetic {
		cf = append(cf, i)
	}
	single := map[[2]int][]int{}
	for r, row := range c.rows {
		for _, f := range cf {
			k := [2]int{f, int(row[f])}
			single[k] = append(single[k], r)
		}
	}
	var out []*candidate
	for k, m := range single {
		if len(m) >= minN && len(m) < n {
			out = append(out, &candidate{terms: [][2]int{k}, members: m})
		}
	}
	return out
}

// judgeRecords caps the records the judging reads (every k-th of the
// sample): enough for the entropies of classes of 1% and more.
const judgeRecords = 30_000

// judge gives each candidate its information per byte against the whole
// sample's: Σ H(F | class) over the fields, per byte of the class's lines,
// over Σ H(F) per byte of all lines, the fields that define the class
// left out on both sides.
func (c *classes) judge(cands []*candidate) {
	n := len(c.rows)
	stride := max(1, (n+judgeRecords-1)/judgeRecords)
	var all []float64
	m, total := 0, 0
	for f := range c.fields {
		counts := map[uint32]int{}
		m, total = 0, 0
		for r := 0; r < n; r += stride {
			counts[c.rows[r][f]]++
			m++
			total += c.bytes[r]
		}
		all = append(all, entropyMM(counts, m))
	}
	for _, cd := range cands {
		def := map[int]bool{}
		for _, t := range cd.terms {
			def[t[0]] = true
		}
		var in, ref float64
		k, b := 0, 0
		for f := range c.fields {
			counts := map[uint32]int{}
			k, b = 0, 0
			for _, r := range cd.members {
				if r%stride == 0 {
					counts[c.rows[r][f]]++
					k++
					b += c.bytes[r]
				}
			}
			if k == 0 {
				break
			}
			h := entropyMM(counts, k)
			if c.synthetic[f] {
				continue
			}
			cd.bits += h
			if !def[f] {
				in += h
				ref += all[f]
			}
		}
		for _, r := range cd.members {
			cd.bytes += c.bytes[r]
		}
		// Where the other fields carry nothing in the whole sample either,
		// there is nothing to compare: not routine.
		cd.ratio = 1
		if ref > 0 && k > 0 {
			cd.ratio = (in / (float64(b) / float64(k))) / (ref / (float64(total) / float64(m)))
		}
	}
}

// reductions finds the routine classes and the duplicates, measures what
// reducing each saves (before is the sample as measured; size compresses)
// and loses (idBits: the time and identifier fields' entropy, bits).
func (c *classes) reductions(before []byte, size func([]byte) float64, idBits float64, paths map[string][][]string) []Reduction {
	n := len(c.rows)
	if n < MinReductionRecords {
		return nil
	}
	why := c.findings()
	total := 0
	for _, b := range c.bytes {
		total += b
	}
	base := size(before)
	cands := c.candidates()
	c.judge(cands)
	cands = c.sameRecords(cands)
	// Most routine first: a cap on the classes offered keeps those.
	sort.Slice(cands, func(a, b int) bool {
		ca, cb := cands[a], cands[b]
		if ca.ratio != cb.ratio {
			return ca.ratio < cb.ratio
		}
		return c.fields[ca.terms[0][0]] < c.fields[cb.terms[0][0]]
	})
	if debugClasses != nil {
		for _, cd := range cands {
			var ts []ClassTerm
			for _, t := range cd.terms {
				ts = append(ts, ClassTerm{Field: c.fields[t[0]], Value: TableValue{Text: c.text(t[0], uint32(t[1]))}})
			}
			debugClasses(fmt.Sprintf("%-50s n=%6d ratio=%.3f bits=%.1f", describe(ts), len(cd.members), cd.ratio, cd.bits))
		}
	}
	taken := make([]bool, n)
	var out []Reduction
	for _, cd := range cands {
		if cd.ratio > RoutineRatio || len(out) >= maxReductions {
			continue
		}
		overlap := 0
		for _, r := range cd.members {
			if taken[r] {
				overlap++
			}
		}
		if 2*overlap > len(cd.members) {
			continue
		}
		for _, r := range cd.members {
			taken[r] = true
		}
		red := Reduction{Action: SampleRecords, KeepOneIn: KeepOneIn, Ratio: cd.ratio}
		for _, t := range cd.terms {
			term := ClassTerm{Field: c.fields[t[0]], JSON: c.json}
			if c.synthetic[t[0]] {
				src := strings.TrimSuffix(term.Field, companion.TemplateSuffix)
				id, _ := companion.ParseID(c.texts[t[0]][t[1]-1])
				text, ok := c.tmpl[src].Text(id)
				if t[1] == 0 || !ok {
					continue
				}
				term = ClassTerm{Field: src, Template: text}
				if ps := paths[src]; len(ps) == 1 {
					term.Path = ps[0]
				}
				red.Terms = append(red.Terms, term)
				continue
			}
			if t[1] == 0 {
				term.Value.Absent = true
			} else {
				term.Value.Text = c.texts[t[0]][t[1]-1]
			}
			if ps := paths[term.Field]; len(ps) == 1 {
				term.Path = ps[0]
			}
			red.Terms = append(red.Terms, term)
		}
		red.Class = describe(red.Terms)
		red.BitsPerClassRecord = cd.bits + idBits
		left := make([]bool, n)
		k := 0
		for _, r := range cd.members {
			if k%KeepOneIn != 0 {
				left[r] = true
			}
			k++
		}
		c.measure(&red, cd.members, left, before, base, size, total, why)
		out = append(out, red)
	}
	if red, ok := c.duplicates(before, base, size, total, idBits, why); ok {
		out = append(out, red)
	}
	for i := range out {
		out[i].ID = fmt.Sprintf("r%d", i+1)
	}
	return out
}

// sameRecords keeps one candidate of those that pick the same records
// (route="/healthz" and upstream="local" on the demo): named by the field
// with more values, which says more, and judged by the lowest ratio among
// them.
func (c *classes) sameRecords(cands []*candidate) []*candidate {
	type key struct{ n, bytes, first, last int }
	best := map[key]*candidate{}
	low := map[key]float64{}
	var order []key
	for _, cd := range cands {
		k := key{len(cd.members), cd.bytes, cd.members[0], cd.members[len(cd.members)-1]}
		b, ok := best[k]
		if !ok {
			best[k], low[k] = cd, cd.ratio
			order = append(order, k)
			continue
		}
		low[k] = min(low[k], cd.ratio)
		da, db := len(c.texts[cd.terms[0][0]]), len(c.texts[b.terms[0][0]])
		if da > db || da == db && c.fields[cd.terms[0][0]] < c.fields[b.terms[0][0]] {
			best[k] = cd
		}
	}
	out := make([]*candidate, 0, len(order))
	for _, k := range order {
		best[k].ratio = low[k]
		out = append(out, best[k])
	}
	return out
}

// measure fills a reduction's shares, savings, loss and findings: members
// are the class's records, left those the reduction leaves out.
func (c *classes) measure(red *Reduction, members []int, left []bool, before []byte, base float64, size func([]byte) float64, total int, why []string) {
	n := float64(len(c.rows))
	var kept []byte
	rest := before
	var leftN, leftBytes, classBytes int
	for i := range c.rows {
		var line []byte
		line, rest, _ = bytes.Cut(rest, []byte{'\n'})
		if left[i] {
			leftN++
			leftBytes += c.bytes[i]
			continue
		}
		kept = append(append(kept, line...), '\n')
	}
	if measuredReduction != nil {
		measuredReduction(red.Class, kept)
	}
	seen := map[string]bool{}
	for _, r := range members {
		classBytes += c.bytes[r]
		if why[r] != "" {
			red.Findings++
			if !seen[why[r]] && len(red.FindingExamples) < 3 {
				seen[why[r]] = true
				red.FindingExamples = append(red.FindingExamples, why[r])
			}
		}
	}
	red.ShareRecords = float64(len(members)) / n
	red.ShareBytes = float64(classBytes) / float64(total)
	red.Saved = Size{float64(leftBytes) / n, (base - size(kept)) / n}
	red.BitsLostPerRecord = float64(leftN) / n * red.BitsPerClassRecord
}

// duplicates is the class of records that repeat an earlier one of the
// same minute in every field but the time and identifier fields.
func (c *classes) duplicates(before []byte, base float64, size func([]byte) float64, total int, idBits float64, why []string) (Reduction, bool) {
	n := len(c.rows)
	type key struct {
		h uint64
		b int64
	}
	groups := map[key][]int{}
	for i := range c.rows {
		k := key{c.dup[i], c.bucket[i]}
		groups[k] = append(groups[k], i)
	}
	var members []int
	left := make([]bool, n)
	kept := 0
	for _, g := range groups {
		if len(g) < 2 {
			continue
		}
		kept++
		members = append(members, g...)
		for _, r := range g[1:] {
			left[r] = true
		}
	}
	if float64(len(members)) < MinClassShare*float64(n) || len(members) < minClassRecords {
		return Reduction{}, false
	}
	sort.Ints(members)
	ign := append([]string(nil), c.h.ignore...)
	sort.Strings(ign)
	red := Reduction{Action: CollapseRecords, Ignore: ign, Span: "1m", KeepOneIn: float64(len(members)) / float64(kept),
		BitsPerClassRecord: idBits}
	red.Class = "repeats within a minute"
	if len(ign) > 0 {
		red.Class += ", but for " + strings.Join(ign, ", ")
	}
	c.measure(&red, members, left, before, base, size, total, why)
	return red, true
}
