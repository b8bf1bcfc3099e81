package plan

import (
	"bytes"
	"sort"
	"strings"
)

// TableValue is one value in a mapping table: for JSON input Text is the
// value's compact JSON text (so 200 and "200" differ, as they do to jq),
// otherwise the parsed text. Absent: the record lacks the field.
type TableValue struct {
	Text   string
	Absent bool
}

// TableRow maps the determinant's values (From, in the order of
// Field.From) to the dropped field's value. A constant's one row has no
// From.
type TableRow struct {
	From  []TableValue
	Value TableValue
}

// Table is what rebuilds a dropped field: a constant's value or a derived
// field's mapping, rows sorted by their From values.
type Table struct {
	JSON bool // values are compact JSON text
	Rows []TableRow
}

func tv(v value) TableValue { return TableValue{v.text, v.absent} }

// table is field f's table after Measure, nil for a field nothing
// rebuilds.
func (m *measurer) table(f *Field, tables map[string]map[value]value) *Table {
	switch {
	case f.Action == Derive:
		tab := tables[f.Name]
		gs := make([]value, 0, len(tab))
		for g := range tab {
			gs = append(gs, g)
		}
		sort.Slice(gs, func(a, b int) bool { return less(gs[a], gs[b]) })
		t := &Table{JSON: m.json}
		for _, g := range gs {
			t.Rows = append(t.Rows, TableRow{From: []TableValue{tv(g)}, Value: tv(tab[g])})
		}
		return t
	case f.Action == Drop && f.Exact:
		v := m.firstVal[f.Name]
		if !m.json && f.Value != "" {
			v = f.Value
		}
		return &Table{JSON: m.json, Rows: []TableRow{{Value: TableValue{Text: v}}}}
	}
	return nil
}

// keyOrder gathers the order of the keys of one object in the sample:
// each key's first appearance, and which key directly followed which in
// some record. When the records agree on one order, a topological sort of
// those edges gives it, and every record's keys are a subsequence of it.
type keyOrder struct {
	first map[string]int
	next  map[[2]string]bool
}

// orders holds a keyOrder per object path (the path's keys joined by NUL;
// "" is the record itself).
type orders map[string]*keyOrder

// maxOrders caps the object paths followed, and maxOrderKeys the keys of
// one object: records with ever new keys must not grow the plan's memory
// past the sample's.
const (
	maxOrders    = 4096
	maxOrderKeys = 1024
)

// note takes the order of one object's keys.
func (o orders) note(kids []node, path []string) {
	p := strings.Join(path, "\x00")
	ko := o[p]
	if ko == nil {
		if len(o) >= maxOrders {
			return
		}
		ko = &keyOrder{first: map[string]int{}, next: map[[2]string]bool{}}
		o[p] = ko
	}
	for i, k := range kids {
		if _, ok := ko.first[k.key]; !ok && len(ko.first) < maxOrderKeys {
			ko.first[k.key] = len(ko.first)
		}
		if i > 0 && len(ko.next) < maxOrderKeys*4 {
			ko.next[[2]string{kids[i-1].key, k.key}] = true
		}
		if k.raw == nil {
			o.note(k.kids, append(path[:len(path):len(path)], k.key))
		}
	}
}

// keys sorts the keys topologically (Kahn's algorithm), taking among the
// keys free to come next the one seen first; keys on a cycle (records that
// disagree) follow in order of first appearance.
func (ko *keyOrder) keys() []string {
	in := map[string]int{}
	out := map[string][]string{}
	for e := range ko.next {
		if _, ok := ko.first[e[0]]; !ok {
			continue
		}
		if _, ok := ko.first[e[1]]; !ok {
			continue
		}
		in[e[1]]++
		out[e[0]] = append(out[e[0]], e[1])
	}
	all := make([]string, 0, len(ko.first))
	for k := range ko.first {
		all = append(all, k)
	}
	sort.Slice(all, func(a, b int) bool { return ko.first[all[a]] < ko.first[all[b]] })
	done := map[string]bool{}
	var res []string
	for len(res) < len(all) {
		pick := ""
		for _, k := range all {
			if !done[k] && in[k] == 0 {
				pick = k
				break
			}
		}
		if pick == "" { // a cycle: take the earliest key left
			for _, k := range all {
				if !done[k] {
					pick = k
					break
				}
			}
		}
		done[pick] = true
		res = append(res, pick)
		for _, n := range out[pick] {
			in[n]--
		}
	}
	return res
}

func (o orders) export() map[string][]string {
	out := make(map[string][]string, len(o))
	for p, ko := range o {
		out[p] = ko.keys()
	}
	return out
}

// reorder puts an object's members in the order keys gives: a member's
// rank is its key's place in keys, or for a key not there the rank of
// the member before it, and members are sorted by rank, stably. The jq
// program does the same (bs_order).
func reorder(kids []node, keys []string) {
	at := make(map[string]int, len(keys))
	for i, k := range keys {
		at[k] = i
	}
	ranks := make(map[*node]int, len(kids))
	r := -1
	for i := range kids {
		if x, ok := at[kids[i].key]; ok {
			r = x
		}
		ranks[&kids[i]] = r
	}
	idx := make([]int, len(kids))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return ranks[&kids[idx[a]]] < ranks[&kids[idx[b]]] })
	out := make([]node, len(kids))
	for i, j := range idx {
		out[i] = kids[j]
	}
	copy(kids, out)
}

// setPath sets the leaf at path to raw, making the objects on the way
// (at the end of their parent, as jq's setpath does). A leaf on the way
// stops it: jq's setpath fails there and the program leaves the record.
func setPath(kids []node, path []string, raw []byte) []node {
	for i := range kids {
		if kids[i].key != path[0] {
			continue
		}
		if len(path) == 1 {
			kids[i].raw, kids[i].kids = raw, nil
			return kids
		}
		if kids[i].raw != nil {
			return kids
		}
		kids[i].kids = setPath(kids[i].kids, path[1:], raw)
		return kids
	}
	if len(path) == 1 {
		return append(kids, node{key: path[0], raw: raw})
	}
	return append(kids, node{key: path[0], kids: setPath(nil, path[1:], raw)})
}

// objectAt returns the members of the object at path, or nil.
func objectAt(kids []node, path []string) []node {
	for _, p := range path {
		found := false
		for i := range kids {
			if kids[i].key == p && kids[i].raw == nil {
				kids, found = kids[i].kids, true
				break
			}
		}
		if !found {
			return nil
		}
	}
	return kids
}

// restorable is a dropped field the restore program rebuilds: a constant
// or an exactly derived field, written under one key path, rebuilt from a
// determinant written under one key path.
type restorable struct {
	f    *Field
	path []string
	from []string // the determinant's path; nil for a constant
}

// restorables lists the fields restore rebuilds, by name, and the object
// paths it reorders. paths gives each field's key paths in the sample.
func restorables(p *Plan, paths map[string][][]string) (rs []restorable, parents [][]string) {
	seen := map[string]bool{}
	for i := range p.Fields {
		f := &p.Fields[i]
		if !f.Exact || !f.Dropped() || len(paths[f.Name]) != 1 {
			continue
		}
		r := restorable{f: f, path: paths[f.Name][0]}
		if f.Action == Derive {
			if len(f.From) != 1 || len(paths[f.From[0]]) != 1 {
				continue
			}
			r.from = paths[f.From[0]][0]
		}
		rs = append(rs, r)
		for n := 0; n < len(r.path); n++ {
			k := strings.Join(r.path[:n], "\x00")
			if !seen[k] {
				seen[k] = true
				parents = append(parents, r.path[:n])
			}
		}
	}
	return rs, parents
}

// leafAt returns the compact JSON text at path, absent when there is none.
func leafAt(kids []node, path []string) value {
	obj := objectAt(kids, path[:len(path)-1])
	for _, k := range obj {
		if k.key == path[len(path)-1] {
			if k.raw == nil {
				return value{text: string(appendTree(nil, k.kids, "", nil))}
			}
			return value{text: string(k.raw)}
		}
	}
	return value{absent: true}
}

// verifyJSON applies the plan to each sample record as the jq programs
// do: drop (the "after" line), then restore from the tables and the key
// orders, and compares the result with the record byte for byte. A field
// whose rebuilt value differs counts a mismatch; a record whose values
// all agree but whose keys came back in another order counts in
// Reordered.
func (m *measurer) verifyJSON(tables map[string]map[value]value, meas *Measurement) {
	paths := m.allPaths()
	rs, parents := restorables(m.p, paths)
	mism := map[string]int{}
	bs, as := m.before, m.after
	var out []byte
	for len(bs) > 0 && len(as) > 0 {
		var b, a []byte
		b, bs, _ = bytes.Cut(bs, []byte{'\n'})
		a, as, _ = bytes.Cut(as, []byte{'\n'})
		orig, err1 := parseTree(b)
		tree, err2 := parseTree(a)
		if err1 != nil || err2 != nil {
			meas.KeptChanged++
			continue
		}
		for _, r := range rs {
			var v value
			if r.from == nil {
				v = value{text: m.firstVal[r.f.Name]}
			} else if got, ok := tables[r.f.Name][leafAt(tree, r.from)]; ok {
				v = got
			} else {
				v = value{absent: true}
			}
			if !v.absent {
				tree = setPath(tree, r.path, []byte(v.text))
			}
		}
		for _, pp := range parents {
			if keys, ok := meas.Orders[strings.Join(pp, "\x00")]; ok {
				if len(pp) == 0 {
					reorder(tree, keys)
				} else if obj := objectAt(tree, pp); obj != nil {
					reorder(obj, keys)
				}
			}
		}
		out = appendTree(out[:0], tree, "", nil)
		if bytes.Equal(out, b) {
			continue
		}
		got, want := map[string]string{}, map[string]string{}
		walk(tree, "", nil, func(k string, _ []string, raw []byte) { got[k] = string(raw) })
		walk(orig, "", nil, func(k string, _ []string, raw []byte) { want[k] = string(raw) })
		same := len(got) == len(want)
		for k, w := range want {
			if g, ok := got[k]; !ok || g != w {
				same = false
				if m.drop[k] {
					mism[k]++
				} else {
					meas.KeptChanged++
				}
			}
		}
		if same {
			meas.Reordered++
		}
	}
	for i := range m.p.Fields {
		f := &m.p.Fields[i]
		f.Mismatches = mism[f.Name]
		meas.Mismatches += f.Mismatches
		if f.Exact && f.Dropped() && len(paths[f.Name]) > 1 {
			f.Mismatches++ // written under two key paths: restore cannot tell which
			meas.Mismatches++
		}
	}
}

// allPaths is every field's key paths in the sample, sorted.
func (m *measurer) allPaths() map[string][][]string {
	out := map[string][][]string{}
	for name, ps := range m.paths {
		keys := make([]string, 0, len(ps))
		for k := range ps {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		for _, k := range keys {
			out[name] = append(out[name], ps[k])
		}
	}
	return out
}
