package plan

import (
	"fmt"
	"maps"

	"bitsift/model"
)

// Make chooses a plan from the snapshot and, with a sample, measures and
// verifies it. A field offered as lossless that does not rebuild exactly on
// the sample is taken out of the plan (kept, with a note saying why) and the
// plan is chosen again, until every lossless drop rebuilds with no
// mismatch. Without a sample (smp nil) it is Choose.
func Make(s *model.Snapshot, smp *Sample, opt Options) (*Plan, error) {
	opt.inexact = maps.Clone(opt.inexact)
	if opt.inexact == nil {
		opt.inexact = map[string]string{}
	}
	for {
		p := Choose(s, opt)
		if smp == nil {
			return p, nil
		}
		if err := p.Measure(smp); err != nil {
			return p, err
		}
		again := false
		for _, f := range p.Fields {
			if f.Exact && f.Mismatches > 0 && f.Pin != PinDrop {
				opt.inexact[f.Name] = fmt.Sprintf("%d of %d sample records did not rebuild", f.Mismatches, p.Measured.Records)
				again = true
			}
		}
		if !again {
			return p, nil
		}
	}
}

// SavedPerDay is the saving per day at the observed record rate, raw and
// compressed bytes; ok is false when the rate or the measurement is
// missing.
func (p *Plan) SavedPerDay() (s Size, ok bool) {
	if p.Measured == nil || p.RecordsPerSecond <= 0 {
		return Size{}, false
	}
	d := p.Measured.Saved()
	perDay := p.RecordsPerSecond * 86400
	return Size{d.Raw * perDay, d.Compressed * perDay}, true
}
