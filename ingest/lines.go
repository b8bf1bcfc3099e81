package ingest

import (
	"bitsift/model"
)

// LineBehind is one record behind a finding: where it came from, and its
// raw text when raw lines are kept, else (under --redact) its values as
// the model holds them, redacted.
type LineBehind struct {
	Source string // "" when the raw line is no longer kept
	Line   int64
	Time   int64
	Raw    []byte // nil: not kept
	Values map[string]string
}

// LinesBehind finds the newest limit window records that meet every
// condition (model.Find), newest first, with their raw lines from the
// kept ring (Ingester.KeepRaw) matched by order and line number; total is
// how many window records meet them. For the owner goroutine only.
func (in *Ingester) LinesBehind(conds []model.Cond, limit int) (lines []LineBehind, total int) {
	m := in.model
	found, total := m.Find(conds, limit)
	out := make([]LineBehind, len(found))
	for i, f := range found {
		out[i] = LineBehind{Line: f.Line, Time: f.Time, Values: f.Values}
	}
	if in.raw == nil || len(found) == 0 {
		return out, total
	}
	// Walk the window from its newest record and the ring from its newest
	// line together: both are in reading order, and the ring also holds
	// lines that are not records (rejected), which are skipped.
	j := in.raw.Len() - 1
	next := 0
	for age := 0; age <= found[len(found)-1].Age && j >= 0; age++ {
		line := m.LineAt(age)
		for j >= 0 && in.raw.At(j).Num != line {
			j--
		}
		if j < 0 {
			break
		}
		if age == found[next].Age {
			l := in.raw.At(j)
			out[next].Source, out[next].Raw = l.Source, append([]byte(nil), l.Text...)
			next++
			if next == len(found) {
				break
			}
		}
		j--
	}
	return out, total
}
