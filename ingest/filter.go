package ingest

import (
	"time"

	"bitsift/model"
	"bitsift/parse"
)

// Filter narrows a stream to the records that meet every condition
// (--where) and whose time is within [Since, Until) (--since, --until;
// zero: open). The time is the record's own, else its arrival time.
// Records left out are counted (Input.Filtered), never lost silently.
type Filter struct {
	Where []model.Cond
	// Text holds the --where conditions as given, for reports.
	Text         []string
	Since, Until time.Time
}

// Active says whether the filter leaves anything out.
func (f *Filter) Active() bool {
	return f != nil && (len(f.Where) > 0 || !f.Since.IsZero() || !f.Until.IsZero())
}

// Keep says whether the record, of time t (Unix ns), passes.
func (f *Filter) Keep(rec *parse.Record, t int64) bool {
	if !f.Since.IsZero() && t < f.Since.UnixNano() || !f.Until.IsZero() && t >= f.Until.UnixNano() {
		return false
	}
	for _, c := range f.Where {
		v, ok := "", false
		for i := 0; i < rec.Len(); i++ {
			if string(rec.Key(i)) == c.Field {
				v, ok = string(rec.Value(i)), true
				break
			}
		}
		if !c.Meets(v, ok) {
			return false
		}
	}
	return true
}

// Filter is the Ingester's filter (nil: none).
func (in *Ingester) Filter() *Filter { return in.cfg.Filter }

// SetWhere narrows the records taken from now on to those meeting conds
// (text: as typed), keeping --since and --until; none clears it. For the
// owner goroutine: records already in the window stay until they leave.
func (in *Ingester) SetWhere(conds []model.Cond, text []string) {
	f := &Filter{}
	if in.cfg.Filter != nil {
		*f = *in.cfg.Filter
	}
	f.Where, f.Text = conds, text
	in.cfg.Filter = f
}
