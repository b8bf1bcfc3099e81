package model

import "math"

// Baselines. A baseline is a Profile of a healthy period that the current
// window is compared with (shifts, broken rules, surprisal). It is one of:
//
//   - fixed: a profile given with SetBaseline (a saved report, --baseline
//     FILE) or pinned from the current window with PinBaseline;
//   - rolling (UseRollingBaseline): the model profiles its window every
//     window length (WindowRecords: every Records records; WindowDuration:
//     every Duration of record time; WindowAll: every RollingAllRecords
//     records) and compares with the newest profile none of whose records
//     is still in the window, the window as it was one to two window lengths
//     ago. A window "all" never lets records go, so there it is the newest
//     profile at least RollingAllRecords old, and changes show diluted.
//
// Profiles are taken only while the rolling baseline is in use; each costs
// one snapshot, amortised over a window length of records.
type BaselineMode int

// The baseline modes.
const (
	BaselineNone BaselineMode = iota
	BaselineFixed
	BaselineRolling
)

// RollingAllRecords is the rolling checkpoint period of a window "all".
const RollingAllRecords = 50_000

// Entropy history for the z-scores of shifts: the window's H(F) is noted
// every historyEvery records (or a twentieth of a record window if that is
// more), the last historyLen kept per field; a z-score needs historyMin
// notes, and the spread is floored at historyMinSD bits so that a field
// whose entropy never moved does not give an infinite z.
const (
	historyEvery = 1000
	historyLen   = 20
	historyMin   = 5
	historyMinSD = 0.01
)

// baselines is the Model's baseline state.
type baselines struct {
	mode     BaselineMode
	fixed    *Profile
	rolling  []*Profile // oldest first, at most 3
	lastRoll int64      // seen (records) or record time at the last profile
	sinceH   int
	hist     map[string][]float64 // field → its last entropies, oldest first
}

// SetBaseline makes p the baseline (nil: none). The model keeps p; the
// caller must not change it afterwards.
func (m *Model) SetBaseline(p *Profile) {
	if p == nil {
		m.base.mode, m.base.fixed = BaselineNone, nil
		return
	}
	m.base.mode, m.base.fixed = BaselineFixed, p
}

// PinBaseline makes the current window the baseline and returns its
// profile.
func (m *Model) PinBaseline() *Profile {
	p := m.buildProfile(m.snapshot(SnapshotOptions{TopValues: -1}))
	p.Source = "pinned"
	m.SetBaseline(p)
	return p
}

// UseRollingBaseline compares with the previous windows from now on (see
// Baselines above); until a window length has passed there is no baseline.
func (m *Model) UseRollingBaseline() {
	m.base.mode, m.base.fixed = BaselineRolling, nil
	m.base.rolling = nil
	m.base.lastRoll = m.rollClock()
	m.rollProfile()
}

// BaselineMode says which baseline is in use.
func (m *Model) BaselineMode() BaselineMode { return m.base.mode }

// Baseline is the profile compared with now, nil when there is none (yet).
func (m *Model) Baseline() *Profile {
	switch m.base.mode {
	case BaselineFixed:
		return m.base.fixed
	case BaselineRolling:
		oldest := m.seen - int64(m.st.n) // first record still in the window
		for i := len(m.base.rolling) - 1; i >= 0; i-- {
			p := m.base.rolling[i]
			if p.through <= oldest || (m.opt.Window.Kind == WindowAll && m.seen-p.through >= RollingAllRecords) {
				return p
			}
		}
	}
	return nil
}

// Profile is the profile of the current window.
func (m *Model) Profile() *Profile {
	return m.buildProfile(m.snapshot(SnapshotOptions{TopValues: -1}))
}

func (m *Model) rollClock() int64 {
	if m.opt.Window.Kind == WindowDuration {
		return m.maxTime
	}
	return m.seen
}

func (m *Model) rollPeriod() int64 {
	switch m.opt.Window.Kind {
	case WindowRecords:
		return int64(m.opt.Window.Records)
	case WindowDuration:
		return m.opt.Window.Duration.Nanoseconds()
	}
	return RollingAllRecords
}

// afterAdd does the per-record baseline work: O(1) except at checkpoints,
// which are amortised over many records.
func (m *Model) afterAdd() {
	m.base.sinceH++
	every := historyEvery
	if m.opt.Window.Kind == WindowRecords {
		every = max(every, m.opt.Window.Records/historyLen)
	}
	if m.base.sinceH >= every {
		m.base.sinceH = 0
		m.noteEntropies()
	}
	m.maybeRoll()
}

// maybeRoll rolls the baseline when a rolling one's period has passed.
func (m *Model) maybeRoll() {
	if m.base.mode == BaselineRolling && m.rollClock()-m.base.lastRoll >= m.rollPeriod() {
		m.base.lastRoll = m.rollClock()
		m.rollProfile()
	}
}

// untilRoll is how many of the next records (times) Add would take up to
// and including the one after which it rolls a rolling baseline.
func (m *Model) untilRoll(times []int64) int {
	period := m.rollPeriod()
	if m.opt.Window.Kind == WindowDuration {
		mt := m.maxTime
		for r, t := range times {
			mt = max(mt, t)
			if mt-m.base.lastRoll >= period {
				return r + 1
			}
		}
		return len(times)
	}
	return int(max(1, m.base.lastRoll+period-m.seen))
}

func (m *Model) rollProfile() {
	if m.st.n == 0 {
		return
	}
	p := m.buildProfile(m.snapshot(SnapshotOptions{TopValues: -1}))
	p.Source = "rolling"
	m.base.rolling = append(m.base.rolling, p)
	if len(m.base.rolling) > 3 {
		m.base.rolling = append(m.base.rolling[:0], m.base.rolling[1:]...)
	}
}

func (m *Model) noteEntropies() {
	if m.base.hist == nil {
		m.base.hist = map[string][]float64{}
	}
	n := int64(m.st.n)
	for _, f := range m.fields {
		h, _, _ := f.entropy(n)
		if f.flat != nil {
			// Filled by unflatten, which replays the list, over the
			// whole stream; never read (flatids.go).
			h = math.NaN()
			f.flat.notes = append(f.flat.notes, int(n))
			if len(f.flat.notes) > historyLen {
				f.flat.notes = f.flat.notes[1:]
			}
		}
		l := append(m.base.hist[f.name], h)
		if len(l) > historyLen {
			l = append(l[:0], l[1:]...)
		}
		m.base.hist[f.name] = l
	}
}

// entropyZ is the z-score of h against the field's recent entropies, 0
// when there are too few.
func (m *Model) entropyZ(name string, h float64) float64 {
	l := m.base.hist[name]
	if len(l) < historyMin {
		return 0
	}
	mean := 0.0
	for _, x := range l {
		mean += x
	}
	mean /= float64(len(l))
	v := 0.0
	for _, x := range l {
		v += (x - mean) * (x - mean)
	}
	sd := math.Max(math.Sqrt(v/float64(len(l)-1)), historyMinSD)
	return (h - mean) / sd
}
