package report

import "bitsift/model"

// Tracer finds where window records came from: a model.Model with the
// names of its inputs.
type Tracer interface {
	// Trace is where the window record of this age came from.
	Trace(age int) model.Trace
	// Find returns the newest window records meeting conds (model.Find).
	Find(conds []model.Cond, limit int) ([]model.Found, int)
}

// modelTracer is a Model with its inputs' names.
type modelTracer struct {
	m     *model.Model
	trace func(age int) model.Trace
}

func (t modelTracer) Trace(age int) model.Trace { return t.trace(age) }
func (t modelTracer) Find(c []model.Cond, limit int) ([]model.Found, int) {
	return t.m.Find(c, limit)
}

// NewTracer traces m's window records; sources names its inputs in the
// order they were read.
func NewTracer(m *model.Model, sources []string) Tracer {
	return modelTracer{m, m.Tracer(sources)}
}

// AddTraces gives the surprising records their file, and each broken
// rule's examples the file, line and time of the newest record with them.
func (r *Report) AddTraces(t Tracer) {
	if r.snap == nil || r.snap.Changes == nil {
		return
	}
	for i, sr := range r.snap.Changes.Surprising {
		if i < len(r.Surprising) {
			r.Surprising[i].File = t.Trace(sr.Age).File
		}
	}
	for i := range r.Broken {
		b := &r.Broken[i]
		for j := range b.Examples {
			e := &b.Examples[j]
			found, _ := t.Find(ExampleConds(b.Given, b.Target, *e), 1)
			if len(found) == 0 {
				continue
			}
			tr := t.Trace(found[0].Age)
			e.File, e.Line, e.Time = tr.File, tr.Line, r.logTime(tr.Time)
		}
	}
}

// ExampleConds are the conditions that find the records of a broken
// rule's example: Given has its value and Target the new one.
func ExampleConds(given, target string, e BreakCase) []model.Cond {
	return []model.Cond{{Field: given, Value: e.GivenValue}, {Field: target, Value: e.TargetValue, Absent: e.TargetAbsent}}
}
