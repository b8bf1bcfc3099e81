package model

import (
	"regexp"
	"sort"
)

// Cond is one condition on a record's field: its value equals Value
// (Absent: the field is absent), or, with Match, matches the regular
// expression; Not negates it.
type Cond struct {
	// Line, when above 0 and Field is "", matches the records read from
	// that line number (in any input).
	Line   int64
	Field  string
	Value  string
	Absent bool
	Match  *regexp.Regexp
	Not    bool
}

// Found is one window record a lookup found.
type Found struct {
	// Age is how many window records are newer (0: the newest); with the
	// raw lines kept in the same order it finds the record's text.
	Age  int
	Line int64
	Time int64
	// Values are its fields with their text (identifiers too, where the
	// model keeps their text).
	Values map[string]string
}

// Find returns the newest limit window records that meet every cond,
// newest first, and how many records meet them in all. It reads only the
// columns of the fields named: O(records·conds).
func (m *Model) Find(conds []Cond, limit int) ([]Found, int) {
	n := m.st.n
	type test struct {
		col  []uint32
		want []bool // by value id (absent is id 0); ids past it: other
		rest bool   // what an id past want gives
	}
	tests := make([]test, 0, len(conds))
	var lineIs []int64
	for _, c := range conds {
		if c.Field == "" && c.Line > 0 {
			lineIs = append(lineIs, c.Line)
			continue
		}
		t := test{}
		idx, ok := m.byName[c.Field]
		if ok {
			m.unflatten(idx)
			f := m.fields[idx]
			t.col = m.st.column(idx, 0, n, nil)
			t.want = make([]bool, len(f.counts))
			t.want[absent] = c.Absent
			for id := 1; id < len(f.counts); id++ {
				if f.text == nil || id >= len(f.text) {
					continue
				}
				v := f.text[id]
				t.want[id] = !c.Absent && (c.Match != nil && c.Match.MatchString(v) || c.Match == nil && v == c.Value)
			}
		} else {
			t.want = []bool{c.Absent}
		}
		if c.Not {
			for i := range t.want {
				t.want[i] = !t.want[i]
			}
			t.rest = true
		}
		tests = append(tests, t)
	}
	var out []Found
	total := 0
	for r := n - 1; r >= 0; r-- {
		ok := true
		for _, l := range lineIs {
			ok = ok && m.st.metaAt(r).line == l
		}
		for _, t := range tests {
			if !ok {
				break
			}
			id := uint32(absent)
			if t.col != nil {
				id = t.col[r]
			}
			if int(id) < len(t.want) {
				ok = t.want[id]
			} else {
				ok = t.rest
			}
			if !ok {
				break
			}
		}
		if !ok {
			continue
		}
		total++
		if len(out) < limit {
			out = append(out, m.found(r))
		}
	}
	return out, total
}

// found describes window record r.
func (m *Model) found(r int) Found {
	meta := m.st.metaAt(r)
	row := m.st.row(r)
	fd := Found{Age: m.st.n - 1 - r, Line: meta.line, Time: meta.time, Values: map[string]string{}}
	for i, f := range m.fields {
		id := idAt(row, i)
		if id != absent && id != overflow && f.text != nil && int(id) < len(f.text) {
			fd.Values[f.name] = f.text[id]
		}
	}
	return fd
}

// Tracer returns where the window record of a given age (see Found) came
// from: sources names the inputs in the order they were read, and a
// record whose line number is not above the one before it starts the
// next input. It reads every record's line number once.
func (m *Model) Tracer(sources []string) func(age int) Trace {
	type start struct {
		row  int
		name string
	}
	var starts []start
	prev, file := int64(-1), -1
	for r := 0; r < m.st.n; r++ {
		line := m.st.metaAt(r).line
		if line <= prev || file < 0 {
			file++
			name := ""
			if file < len(sources) {
				name = sources[file]
			} else if len(sources) > 0 {
				name = sources[len(sources)-1]
			}
			starts = append(starts, start{r, name})
		}
		prev = line
	}
	n := m.st.n
	return func(age int) Trace {
		r := n - 1 - age
		if r < 0 || r >= n || r >= m.st.n {
			return Trace{}
		}
		meta := m.st.metaAt(r)
		i := sort.Search(len(starts), func(i int) bool { return starts[i].row > r }) - 1
		t := Trace{Line: meta.line, Time: meta.time}
		if i >= 0 {
			t.File = starts[i].name
		}
		return t
	}
}

// LineAt is the line number of the window record of a given age (see
// Found), −1 past the window.
func (m *Model) LineAt(age int) int64 {
	r := m.st.n - 1 - age
	if r < 0 || age < 0 {
		return -1
	}
	return m.st.metaAt(r).line
}
