package model

import (
	"math"
	"sort"
	"time"

	"bitsift/parse"
)

// Kind is what a field is to the rest of the record.
type Kind string

// The kinds of field.
const (
	// Constant: one value over the window (absent counts as a value).
	Constant Kind = "constant"
	// Identifier: nearly every value is new (see the identifier rule).
	Identifier Kind = "identifier"
	// Derived: another field determines it (see Derived rule).
	Derived Kind = "derived"
	// Informative: the rest.
	Informative Kind = "informative"
)

// ValueCount is one value of a field and how many window records have it.
type ValueCount struct {
	Value  string
	Count  int
	Absent bool // the value is "the record lacks the field"
	// Sample: the field's values are not kept (an identifier); this is one
	// of the first seen, and Count is not its count.
	Sample bool
}

// FieldStats are the figures of one field over the window.
type FieldStats struct {
	Name      string
	Kind      Kind
	Present   int     // window records that have the field
	Distinct  int     // distinct values, absent counted as one where it occurs
	Entropy   float64 // plug-in, bits
	EntropyMM float64 // Miller–Madow corrected, bits
	Estimate  bool    // distinct and entropy are estimates (value cap reached)
	// BytesPerRecord is the mean length of the field's key and value text
	// per window record (records lacking it count as 0).
	BytesPerRecord float64
	// Tracked: pairs with this field are measured.
	Tracked bool
	// Timestamp: the field is the stream's timestamp, left out of pairs
	// and best predictors (see Model.SetTimestamp).
	Timestamp bool
	// BestGiven is the tracked non-identifier field G ≠ F with the least
	// H(F|G); "" when there is none. Residual is that H(F|G) and
	// Uncertainty is Theil's U(F|G) = I(F;G)/H(F) (1 when H(F) is 0).
	BestGiven   string
	Residual    float64
	Uncertainty float64
	// RFI is the reliable fraction of information about F that BestGiven
	// gives, (I(F;G) − E[I(F;G)])/H(F) (see reliable.go); EMIApprox says
	// E[I] was approximated (the exact sum was past its work bound).
	RFI       float64
	EMIApprox bool
	// Shift compares the field with the baseline; nil without one (see
	// shift.go).
	Shift *Shift
	// Top holds the most frequent values, most frequent first.
	Top []ValueCount
	// Synthetic is set for a field that bitsift made from another field
	// (a companion), which is not in the log itself.
	Synthetic *Synthetic
}

// Ceiling is log2 of the distinct count: the most entropy a field with that
// many values could have.
func (f *FieldStats) Ceiling() float64 {
	if f.Distinct <= 1 {
		return 0
	}
	return math.Log2(float64(f.Distinct))
}

// Snapshot is an immutable copy of the model's figures at one moment. It
// shares nothing with the model.
type Snapshot struct {
	Taken   time.Time
	Window  Window
	Records int   // records in the window
	Seen    int64 // records ever added
	Fields  []FieldStats
	// joint[i][j] is H(Fi,Fj) in bits for tracked pairs, NaN otherwise;
	// i, j index Fields.
	joint [][]float64
	// emi[i][j] is E[I(Fi;Fj)] in bits under the permutation model for
	// measured pairs, NaN otherwise; emiApprox[i*k+j] says it is the
	// first-order approximation.
	emi       [][]float64
	emiApprox []bool
	// Determinants are the minimal multi-field determinants found for
	// fields no single field determines (SnapshotOptions.Deep).
	Determinants []Determinant
	// DeterminantsCut says the search stopped at its work bound.
	DeterminantsCut bool
	// DeepRecords is how many of the newest window records the
	// determinants and surprising records cover (at most DeepMaxRecords;
	// 0 without Deep).
	DeepRecords int
	// Timeline is the window's findings along log time
	// (SnapshotOptions.Timeline; see Model.Timeline); nil otherwise.
	Timeline []TimelineEntry
	// Changes compares the window with the baseline and lists surprising
	// records (SnapshotOptions.Deep, or a baseline being set); nil
	// otherwise.
	Changes *Changes
	// Profile is the window's profile, to serve later as a baseline
	// (SnapshotOptions.Profile).
	Profile *Profile
	// LeftOutFields counts field names past the field cap, not tracked.
	LeftOutFields int
	// Oldest and Newest are the times of the window's first and last
	// records (Unix ns; 0 when empty).
	Oldest, Newest int64
	// Input is filled by the caller that owns the stream.
	Input Input
	// Detail is filled when SnapshotOptions.Detail names a field that has
	// a tracked pair with its given field; nil otherwise.
	Detail *Detail
}

// Input describes where the records came from.
type Input struct {
	Sources    []string
	Format     string
	Confidence float64
	Lines      int64 // lines read
	Rejected   int64 // lines that are not records
	// RejectedExamples holds the first rejected lines and why.
	RejectedExamples []Rejection
	// Faults are read errors that ended a source early.
	Faults []string
	// Parts counts lines held as parts of a record joined from several
	// lines (CRI partial lines): Lines == records + Rejected + Parts.
	Parts int64
	// DupKeyRecords counts records whose line gave a key twice (the last
	// value is kept, as jq and most JSON readers do).
	DupKeyRecords int64
	// Filtered counts records left out by --where, --since or --until:
	// then Lines == records + Rejected + Parts + Filtered.
	Filtered int64
	// TimeField and TimeFormat are the stream's timestamp field and its
	// format (see parse.TimeFinder), "" when none was found.
	TimeField, TimeFormat string
	// Events are what happened to the sources (rotations, truncations,
	// missing files, shortened gaps, faults), oldest first.
	Events []parse.SourceEvent
}

// Rejection is one rejected line.
type Rejection struct {
	Line   int64  `json:"line"`
	Source string `json:"source,omitempty"`
	Reason string `json:"reason"`
	Text   string `json:"text,omitempty"`
}

// Index returns the position of the named field in Fields, or -1.
func (s *Snapshot) Index(name string) int {
	for i := range s.Fields {
		if s.Fields[i].Name == name {
			return i
		}
	}
	return -1
}

// HasPair says whether the pair (i, j) is measured.
func (s *Snapshot) HasPair(i, j int) bool {
	return i != j && !math.IsNaN(s.joint[i][j])
}

// Joint is H(Fi,Fj) in bits (NaN when the pair is not measured).
func (s *Snapshot) Joint(i, j int) float64 {
	if i == j {
		return s.Fields[i].Entropy
	}
	return s.joint[i][j]
}

// Cond is H(Fi|Fj) = H(Fi,Fj) − H(Fj) in bits.
func (s *Snapshot) Cond(i, j int) float64 {
	return nonNeg(s.Joint(i, j) - s.Fields[j].Entropy)
}

// Mutual is I(Fi;Fj) = H(Fi) + H(Fj) − H(Fi,Fj) in bits.
func (s *Snapshot) Mutual(i, j int) float64 {
	return nonNeg(s.Fields[i].Entropy + s.Fields[j].Entropy - s.Joint(i, j))
}

// nonNeg clears the rounding error of differences that are ≥ 0 in exact
// arithmetic.
func nonNeg(x float64) float64 {
	if x < 1e-12 {
		return 0
	}
	return x
}

// SnapshotOptions choose what a snapshot carries besides the figures.
type SnapshotOptions struct {
	TopValues int // values per field in Top (default 10; < 0: none)
	// Detail names a field F whose distribution given each value of
	// another field G is wanted in Snapshot.Detail; "" for none.
	Detail string
	// DetailGiven names G; "" means F's best predictor (BestGiven).
	DetailGiven string
	// DetailRows is how many values of G, DetailTop how many values of F
	// per value of G (defaults 8 and 5).
	DetailRows, DetailTop int
	// Deep adds what needs a scan of the window's records: multi-field
	// determinants and surprising records, over the newest DeepMaxRecords
	// records. It costs O(records·fields) and more (bounded, see
	// determinants.go): take it at the end of a report or every few
	// seconds on a screen, not every frame.
	Deep bool
	// Surprising is how many surprising records Deep keeps (default 10).
	Surprising int
	// Profile adds the window's profile (Snapshot.Profile), which a later
	// run can use as its baseline.
	Profile bool
	// Timeline adds Snapshot.Timeline, Model.Timeline of the snapshot
	// with Sources (the inputs in the order they were read), made beside
	// the Deep analyses.
	Timeline bool
	Sources  []string
}

// Snapshot copies out the current figures. It costs O(fields² + values),
// plus the expected mutual information of each pair (bounded, see emi.go),
// plus what opt asks for.
func (m *Model) Snapshot(opt SnapshotOptions) *Snapshot {
	s := m.snapshot(opt)
	m.analyse(s, opt)
	return s
}

// snapshot is Snapshot without the analyses of analyse.
func (m *Model) snapshot(opt SnapshotOptions) *Snapshot {
	if opt.TopValues == 0 {
		opt.TopValues = 10
	}
	m.settleAll()
	m.realizePairs()
	n := int64(m.st.n)
	s := &Snapshot{
		Taken:         now(),
		Window:        m.opt.Window,
		Records:       m.st.n,
		Seen:          m.seen,
		LeftOutFields: len(m.leftOut),
	}
	if m.st.n > 0 {
		s.Oldest, s.Newest = m.st.metaAt(0).time, m.st.metaAt(m.st.n-1).time
	}
	s.Fields = make([]FieldStats, len(m.fields))
	for i, f := range m.fields {
		h, cells, est := f.entropy(n)
		fs := &s.Fields[i]
		fs.Name = f.name
		fs.Present = int(f.present)
		fs.Distinct = int(cells)
		fs.Entropy = h
		fs.EntropyMM = MillerMadow(h, int(cells), int(n))
		fs.Estimate = est
		fs.Tracked = f.tracked
		if f.synth != nil {
			sy := *f.synth
			fs.Synthetic = &sy
		}
		fs.Timestamp = f.timestamp
		if n > 0 {
			fs.BytesPerRecord = float64(f.present*int64(len(f.name))+f.valueBytes+f.overflowBytes) / float64(n)
		}
		if opt.TopValues > 0 {
			fs.Top = m.top(f, opt.TopValues)
		}
		switch {
		case cells <= 1:
			fs.Kind = Constant
		case f.ident:
			fs.Kind = Identifier
		default:
			fs.Kind = Informative
		}
	}
	k := len(m.fields)
	s.joint = make([][]float64, k)
	flat := make([]float64, k*k)
	for i := range s.joint {
		s.joint[i] = flat[i*k : (i+1)*k]
		for j := range s.joint[i] {
			s.joint[i][j] = math.NaN()
		}
	}
	for _, p := range m.pairs {
		h := entropyFromS(n, p.m.sum())
		s.joint[p.a][p.b] = h
		s.joint[p.b][p.a] = h
	}
	m.fillEMI(s)
	s.classify()
	if opt.Detail != "" {
		s.Detail = m.snapshotDetail(s, opt)
	}
	return s
}

func (m *Model) snapshotDetail(s *Snapshot, opt SnapshotOptions) *Detail {
	fi, ok := m.byName[opt.Detail]
	if !ok {
		return nil
	}
	given := opt.DetailGiven
	if given == "" {
		given = s.Fields[fi].BestGiven
	}
	gi, ok := m.byName[given]
	if !ok {
		return nil
	}
	rows, top := opt.DetailRows, opt.DetailTop
	if rows <= 0 {
		rows = defaultDetailRows
	}
	if top <= 0 {
		top = defaultDetailTop
	}
	return m.detail(fi, gi, rows, top)
}

// top returns the most frequent values of f, absent included.
func (m *Model) top(f *field, k int) []ValueCount {
	out := make([]ValueCount, 0, k+1)
	if a := int64(m.st.n) - f.present; a > 0 {
		out = append(out, ValueCount{Count: int(a), Absent: true})
	}
	if f.overflowed > 0 {
		// Overflow values are each counted once; there is nothing to list.
	}
	minKept := 0
	if f.hashed() {
		// Values of a hashed identifier are not kept; show the first ones
		// seen, which each occur about once.
		for _, v := range f.samples {
			out = append(out, ValueCount{Value: v, Count: 1, Sample: true})
		}
		return out
	}
	for id, c := range f.counts {
		if c == 0 || (len(out) >= k && int(c) < minKept) { // a tie with the last kept may sort before it
			continue
		}
		out = append(out, ValueCount{Value: f.text[id], Count: int(c)})
		if len(out) > 2*k {
			sortValues(out)
			out = out[:k]
			minKept = out[k-1].Count
		}
	}
	sortValues(out)
	if len(out) > k {
		out = out[:k]
	}
	return out
}

func sortValues(v []ValueCount) {
	sort.Slice(v, func(i, j int) bool {
		if v[i].Count != v[j].Count {
			return v[i].Count > v[j].Count
		}
		return v[i].Value < v[j].Value
	})
}
