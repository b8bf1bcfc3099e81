package plan

import (
	"bytes"
	"fmt"
	"sort"
	"strings"

	"github.com/klauspost/compress/zstd"

	"bitsift/parse"
)

// Measurement is what applying a plan to a sample showed. Sizes are bytes
// per sample record.
type Measurement struct {
	Records int // sample records measured
	// Skipped counts sample lines not measured: not a record of the
	// stream's format, or (JSON) not read by encoding/json.
	Skipped int
	// Serialised is the text the records were written in: "json" for JSON
	// input, "logfmt" for logfmt and for every other format.
	Serialised string
	// Before and After are the records as written before and after the
	// plan; After includes Tables, the mapping tables and constants written
	// once after the records. Compressed sizes are of each batch as one
	// zstd stream at the default level.
	Before, After, Tables Size
	// Mismatches counts dropped values the tables did not rebuild, over
	// all fields; KeptChanged counts records whose kept fields did not
	// survive the round trip (0 unless something is wrong).
	Mismatches  int
	KeptChanged int
	// Paths gives, for each dropped JSON field, the key paths it was
	// written under in the sample: ["http","status"] for a nested key,
	// ["id.orig_h"] for a flat key with a dot in its name.
	Paths map[string][][]string
	// Orders gives, for JSON input, the order of each object's keys in the
	// sample (by the object's path, keys joined by NUL; "" is the record),
	// which the restore program puts rebuilt keys back in.
	Orders map[string][]string
	// Reordered counts records whose values all came back but not in
	// their order (the records disagree on one key order).
	Reordered int
}

// Size is a size in bytes per record.
type Size struct{ Raw, Compressed float64 }

// Saved is before minus after.
func (m *Measurement) Saved() Size {
	return Size{m.Before.Raw - m.After.Raw, m.Before.Compressed - m.After.Compressed}
}

// measuredText, when set, is given the batches Measure compresses: a seam
// for tests that compress the same bytes with the zstd tool.
var measuredText func(before, after []byte)

// value is a field's value in one record, "absent" being a value of its
// own.
type value struct {
	text   string
	absent bool
}

// measurer holds one Measure call's state.
type measurer struct {
	p        *Plan
	back     parse.Format // reads the serialised lines
	drop     map[string]bool
	counts   map[string]map[string]int64 // field → value text → records
	tables   map[string]map[value]map[value]int
	paths    map[string]map[string][]string
	before   []byte
	after    []byte
	recs     parse.Record
	backRec  parse.Record
	firstVal map[string]string
	rec      map[string]string // reused by count
	// json: values are compact JSON text (200 and "200" differ), read from
	// the tree; otherwise the parsed text.
	json   bool
	orders orders
	lines  int // records counted
}

// Measure applies p to the sample's records, in their input format: it
// measures the sizes before and after, builds the mapping tables, rebuilds
// the dropped fields from them and counts mismatches, and computes each
// field's Huffman code length over the sample. An exact field that does
// not rebuild makes the plan not lossless (Make then takes it out).
func (p *Plan) Measure(smp *Sample) error {
	in, err := parse.ByName(p.Format)
	if err != nil {
		return fmt.Errorf("plan: cannot measure records of format %q: %w", p.Format, err)
	}
	m := &measurer{p: p, drop: map[string]bool{}, counts: map[string]map[string]int64{},
		tables: map[string]map[value]map[value]int{},
		paths:  map[string]map[string][]string{}, firstVal: map[string]string{}, json: p.Format == "json",
		orders: orders{}}
	meas := &Measurement{Serialised: "logfmt"}
	if m.json {
		meas.Serialised = "json"
	}
	m.back, _ = parse.ByName(meas.Serialised)
	for _, f := range p.Fields {
		if f.Dropped() {
			m.drop[f.Name] = true
		}
		if f.Action == Derive {
			m.tables[f.Name] = map[value]map[value]int{}
		}
		m.counts[f.Name] = map[string]int64{}
	}
	cls := newClasses(p, m.json)
	var bl, al []byte
	smp.Each(func(line []byte) {
		var ok bool
		bl, al, ok = m.serialise(in, line, bl[:0], al[:0])
		if !ok {
			meas.Skipped++
			return
		}
		meas.Records++
		m.before = append(append(m.before, bl...), '\n')
		m.after = append(append(m.after, al...), '\n')
		if !m.json {
			m.count(bl)
		}
		cls.add(m.rec, len(bl)+1)
	})
	if meas.Records == 0 {
		return fmt.Errorf("plan: none of the %d sample lines could be measured as %s records", smp.Len(), p.Format)
	}
	tables := m.buildTables()
	tableText := m.writeTables(tables)
	if m.json {
		meas.Orders = m.orders.export()
		m.verifyJSON(tables, meas)
	} else {
		m.verify(tables, meas)
	}

	n := float64(meas.Records)
	enc, err := zstd.NewWriter(nil, zstd.WithEncoderLevel(zstd.SpeedDefault), zstd.WithEncoderConcurrency(1))
	if err != nil {
		return fmt.Errorf("plan: zstd: %w", err)
	}
	defer enc.Close()
	size := func(b []byte) float64 { return float64(len(enc.EncodeAll(b, nil))) }
	afterAll := append(m.after[:len(m.after):len(m.after)], tableText...)
	if measuredText != nil {
		measuredText(m.before, afterAll)
	}
	meas.Before = Size{float64(len(m.before)) / n, size(m.before) / n}
	meas.After = Size{float64(len(afterAll)) / n, size(afterAll) / n}
	meas.Tables = Size{float64(len(tableText)) / n, meas.After.Compressed - size(m.after)/n}
	meas.Paths = m.allPaths()
	for i := range p.Fields {
		f := &p.Fields[i]
		cs := m.counts[f.Name]
		vals := make([]int64, 0, len(cs)+1)
		var present int64
		for _, c := range cs {
			vals = append(vals, c)
			present += c
		}
		if a := int64(meas.Records) - present; a > 0 {
			vals = append(vals, a)
		}
		f.SampleEntropy, f.Huffman = Entropy(vals), HuffmanLength(vals)
		if f.Action == Drop && f.Exact && f.Value == "" {
			f.Value = m.firstVal[f.Name]
		}
		f.Table = m.table(f, tables)
		if t, ok := tables[f.Name]; ok {
			f.TableEntries = len(t)
		} else if f.Action == Drop && f.Exact {
			f.TableEntries = 1
		}
		if f.Exact && f.Mismatches > 0 {
			p.Lossless = false
		}
	}
	idBits := 0.0
	for _, name := range p.hints.ignore {
		if f := p.Field(name); f != nil {
			idBits += f.Entropy
		}
	}
	p.Reductions = cls.reductions(m.before, size, idBits, meas.Paths)
	if meas.Records < MinReductionRecords {
		p.Notes = append(p.Notes, fmt.Sprintf("record classes are judged on %d measured records or more; %d were measured", MinReductionRecords, meas.Records))
	}
	for i := range p.Reductions {
		p.Reductions[i].Pin = p.recordPins[p.Reductions[i].Class]
	}
	if meas.Reordered > 0 {
		p.Notes = append(p.Notes, fmt.Sprintf("%d sample records disagree with the others on the order of their keys: "+
			"restore gives them their values back, but in the common order", meas.Reordered))
	}
	p.Measured = meas
	return nil
}

// serialise writes line before and after the plan; ok is false when the
// line is not a record.
func (m *measurer) serialise(in parse.Format, line, bl, al []byte) ([]byte, []byte, bool) {
	if m.p.Format == "json" {
		tree, err := parseTree(line)
		if err != nil {
			return bl, al, false
		}
		bl = appendTree(bl, tree, "", nil)
		al = appendTree(al, tree, "", m.drop)
		if m.rec == nil {
			m.rec = map[string]string{}
		}
		clear(m.rec)
		m.orders.note(tree, nil)
		walk(tree, "", nil, func(key string, path []string, raw []byte) {
			{
				ps := m.paths[key]
				if ps == nil {
					ps = map[string][]string{}
					m.paths[key] = ps
				}
				j := strings.Join(path, "\x00")
				if _, ok := ps[j]; !ok {
					ps[j] = path
				}
			}
			if _, dup := m.rec[key]; !dup {
				m.rec[key] = string(raw)
			}
		})
		m.take(m.rec)
		return bl, al, true
	}
	m.recs.Reset()
	if err := in.Parse(line, &m.recs); err != nil {
		return bl, al, false
	}
	return appendLogfmt(bl, &m.recs, nil), appendLogfmt(al, &m.recs, m.drop), true
}

// read parses a serialised line into field → value (first occurrence).
func (m *measurer) read(line []byte, into map[string]string) bool {
	clear(into)
	m.backRec.Reset()
	if err := m.back.Parse(line, &m.backRec); err != nil {
		return false
	}
	for i := 0; i < m.backRec.Len(); i++ {
		k := string(m.backRec.Key(i))
		if _, dup := into[k]; !dup {
			into[k] = string(m.backRec.Value(i))
		}
	}
	return true
}

func get(rec map[string]string, k string) value {
	v, ok := rec[k]
	return value{text: v, absent: !ok}
}

// count takes one record's values into the value counts and the tables.
func (m *measurer) count(line []byte) {
	if m.rec == nil {
		m.rec = map[string]string{}
	}
	if !m.read(line, m.rec) {
		return
	}
	m.take(m.rec)
}

// take counts one record's values (field → text) into the value counts and
// the tables.
func (m *measurer) take(rec map[string]string) {
	m.lines++
	for k, v := range rec {
		if cs, ok := m.counts[k]; ok {
			cs[v]++
			if _, seen := m.firstVal[k]; !seen {
				m.firstVal[k] = v
			}
		}
	}
	for _, f := range m.p.Fields {
		if f.Action != Derive {
			continue
		}
		t := m.tables[f.Name]
		g := get(rec, f.From[0])
		row := t[g]
		if row == nil {
			row = map[value]int{}
			t[g] = row
		}
		row[get(rec, f.Name)]++
	}
}

// buildTables maps each determinant value to the most common value of the
// derived field with it (the only one, for an exact dependency).
func (m *measurer) buildTables() map[string]map[value]value {
	out := map[string]map[value]value{}
	for name, t := range m.tables {
		tab := make(map[value]value, len(t))
		for g, row := range t {
			best, bestN := value{}, -1
			for v, c := range row {
				if c > bestN || (c == bestN && less(v, best)) {
					best, bestN = v, c
				}
			}
			tab[g] = best
		}
		out[name] = tab
	}
	return out
}

func less(a, b value) bool {
	if a.absent != b.absent {
		return a.absent
	}
	return a.text < b.text
}

// writeTables writes the constants and mapping tables as the records are
// written (one line per row, absent values left out), sorted, so that their
// size can be measured and counted against the saving.
func (m *measurer) writeTables(tables map[string]map[value]value) []byte {
	var out []byte
	var rec parse.Record
	line := func(keys []string, vals []value) {
		if m.p.Format == "json" {
			out = append(out, '{')
			first := true
			for i, k := range keys {
				if vals[i].absent {
					continue
				}
				if !first {
					out = append(out, ',')
				}
				first = false
				out = appendJSONString(out, k)
				out = append(out, ':')
				out = append(out, vals[i].text...)
			}
			out = append(out, '}', '\n')
			return
		}
		rec.Reset()
		for i, k := range keys {
			if !vals[i].absent {
				rec.AddString(k, vals[i].text)
			}
		}
		out = append(appendLogfmt(out, &rec, nil), '\n')
	}
	for _, f := range m.p.Fields {
		switch {
		case f.Action == Drop && f.Exact:
			v := f.Value
			if v == "" {
				v = m.firstVal[f.Name]
			}
			line([]string{f.Name}, []value{{text: v}})
		case f.Action == Derive:
			tab := tables[f.Name]
			gs := make([]value, 0, len(tab))
			for g := range tab {
				gs = append(gs, g)
			}
			sort.Slice(gs, func(a, b int) bool { return less(gs[a], gs[b]) })
			for _, g := range gs {
				line([]string{f.From[0], f.Name}, []value{g, tab[g]})
			}
		}
	}
	return out
}

// verify rebuilds every dropped field of every sample record from the
// written-out "after" line and the tables, and compares it with the value
// read from the "before" line.
func (m *measurer) verify(tables map[string]map[value]value, meas *Measurement) {
	before, after := map[string]string{}, map[string]string{}
	bs, as := m.before, m.after
	mism := map[string]int{}
	for len(bs) > 0 && len(as) > 0 {
		var b, a []byte
		b, bs, _ = bytes.Cut(bs, []byte{'\n'})
		a, as, _ = bytes.Cut(as, []byte{'\n'})
		if !m.read(b, before) || !m.read(a, after) {
			meas.KeptChanged++
			continue
		}
		changed := len(after) > len(before)
		for k, v := range after {
			if bv, ok := before[k]; !ok || bv != v || m.drop[k] {
				changed = true
			}
		}
		for _, f := range m.p.Fields {
			if !f.Dropped() {
				if _, ok := before[f.Name]; ok && get(after, f.Name) != get(before, f.Name) {
					changed = true
				}
				continue
			}
			var got value
			switch {
			case f.Action == Derive:
				var ok bool
				if got, ok = tables[f.Name][get(after, f.From[0])]; !ok {
					got = value{absent: true}
				}
			case f.Exact:
				got = value{text: f.Value}
				if got.text == "" {
					got.text = m.firstVal[f.Name]
				}
			default:
				got = value{absent: true}
			}
			if got != get(before, f.Name) {
				mism[f.Name]++
			}
		}
		if changed {
			meas.KeptChanged++
		}
	}
	for i := range m.p.Fields {
		f := &m.p.Fields[i]
		f.Mismatches = mism[f.Name]
		meas.Mismatches += f.Mismatches
	}
}
