package model

import (
	"sort"
	"sync"
)

// Changes is what changed in the window against the baseline, and the
// window's most surprising records.
type Changes struct {
	// Baseline describes the profile compared with; nil when there is
	// none, and then only Surprising is filled, against the window itself.
	Baseline *BaselineInfo
	// Shifts lists the fields with a Shift (also in FieldStats.Shift),
	// flagged first, then by JSD, largest first.
	Shifts []FieldShift
	// Broken lists the baseline's rules that no longer hold, most
	// violations first.
	Broken []BrokenRule
	// Surprising holds the most surprising records, most first (Deep
	// snapshots only).
	Surprising []SurprisingRecord
}

// BaselineInfo says which baseline a comparison used.
type BaselineInfo struct {
	Mode    BaselineMode
	Source  string // "pinned", "rolling" or a file name
	Records int
}

// FieldShift is a field's name with its shift.
type FieldShift struct {
	Field string
	Shift
}

// analyse adds to s what opt asks for and the baseline comparison.
func (m *Model) analyse(s *Snapshot, opt SnapshotOptions) {
	base := m.Baseline()
	if base != nil || opt.Deep {
		s.Changes = &Changes{Shifts: []FieldShift{}, Broken: []BrokenRule{}, Surprising: []SurprisingRecord{}}
	}
	if base != nil {
		s.Changes.Baseline = &BaselineInfo{Mode: m.base.mode, Source: base.Source, Records: base.Records}
		for i := range s.Fields {
			sh := m.fieldShift(s, i, base.Field(s.Fields[i].Name), base.Records)
			if sh == nil {
				continue
			}
			s.Fields[i].Shift = sh
			s.Changes.Shifts = append(s.Changes.Shifts, FieldShift{s.Fields[i].Name, *sh})
		}
		sort.SliceStable(s.Changes.Shifts, func(i, j int) bool {
			a, b := s.Changes.Shifts[i], s.Changes.Shifts[j]
			if a.Flagged != b.Flagged {
				return a.Flagged
			}
			if a.JSD != b.JSD {
				return a.JSD > b.JSD
			}
			return a.Field < b.Field
		})
		s.Changes.Broken = m.brokenRules(s, base)
	}
	if opt.Deep {
		k := opt.Surprising
		if k <= 0 {
			k = 10
		}
		s.DeepRecords = m.deepRows()
		// The scans only read the model (snapshot made every pair table
		// real): they run side by side.
		var wg sync.WaitGroup
		wg.Add(1)
		go func() {
			defer wg.Done()
			s.Changes.Surprising = m.surprising(s, base, k)
		}()
		if opt.Timeline {
			wg.Add(1)
			go func() {
				defer wg.Done()
				s.Timeline = m.Timeline(s, opt.Sources)
			}()
		}
		s.Determinants, s.DeterminantsCut = m.determinants(s)
		wg.Wait()
	} else if opt.Timeline {
		s.Timeline = m.Timeline(s, opt.Sources)
	}
	if opt.Profile {
		s.Profile = m.buildProfile(s)
	}
}
