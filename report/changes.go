package report

import (
	"sort"

	"bitsift/model"
)

// Shift is a field's change against the baseline, as the JSON spells it.
type Shift struct {
	JSD           float64 `json:"jsd_bits"`
	EntropyChange float64 `json:"entropy_change_bits"`
	Z             float64 `json:"z"`
	Binned        bool    `json:"binned,omitempty"`
	Flagged       bool    `json:"flagged"`
}

// Baseline says what the report was compared with.
type Baseline struct {
	Source  string `json:"source"`
	Records int    `json:"records"`
}

// Broken is a baseline rule that no longer holds.
type Broken struct {
	Target       string      `json:"target"`
	Given        string      `json:"given"`
	BaselineBits float64     `json:"baseline_bits"`
	NowBits      float64     `json:"now_bits"`
	Violations   int         `json:"violations"`
	Examples     []BreakCase `json:"examples"`
}

// BreakCase is a value of Given seen with a new value of Target.
type BreakCase struct {
	GivenValue   string `json:"given_value"`
	TargetValue  string `json:"target_value"`
	TargetAbsent bool   `json:"target_absent,omitempty"`
	Expected     string `json:"expected"`
	Count        int    `json:"count"`
	// File, Line and Time trace the newest window record with this pair
	// (set by AddTraces).
	File string `json:"file,omitempty"`
	Line int64  `json:"line,omitempty"`
	Time string `json:"time,omitempty"`
}

// Surprising is one of the most surprising records.
type Surprising struct {
	File          string            `json:"file,omitempty"`
	Line          int64             `json:"line"`
	Time          string            `json:"time,omitempty"`
	IDs           map[string]string `json:"ids,omitempty"`
	Bits          float64           `json:"bits"`
	Record        map[string]string `json:"record"`
	Because       []string          `json:"because"`
	Contributions []Contribution    `json:"contributions"`
}

// Contribution is one field's share of a record's surprisal.
type Contribution struct {
	Field  string  `json:"field"`
	Bits   float64 `json:"bits"`
	Excess float64 `json:"excess_bits"`
	Broke  string  `json:"broke_rule_given,omitempty"`
}

// Determinant is a set of fields that together determine a field no single
// field does.
type Determinant struct {
	Target    string   `json:"target"`
	Given     []string `json:"given"`
	Bits      float64  `json:"bits"`
	RFI       float64  `json:"rfi"`
	EMIApprox bool     `json:"emi_approx"`
}

// addChanges copies the snapshot's analyses into r.
func addChanges(r *Report, s *model.Snapshot) {
	r.Broken, r.Surprising, r.Determinants = []Broken{}, []Surprising{}, []Determinant{}
	r.DeterminantsCut = s.DeterminantsCut
	r.DeepRecords = s.DeepRecords
	r.Profile = s.Profile
	if p := r.Profile; p != nil && (p.Fields == nil || p.Rules == nil) {
		// Lists are never null in JSON, also with no records.
		c := *p
		if c.Fields == nil {
			c.Fields = []model.FieldProfile{}
		}
		if c.Rules == nil {
			c.Rules = []model.Rule{}
		}
		r.Profile = &c
	}
	for _, d := range s.Determinants {
		r.Determinants = append(r.Determinants, Determinant{d.Target, d.Given, round(d.Bits), round(d.RFI), d.EMIApprox})
	}
	c := s.Changes
	if c == nil {
		return
	}
	r.SurprisalAgainst = "window"
	if c.Baseline != nil {
		r.Baseline = &Baseline{Source: c.Baseline.Source, Records: c.Baseline.Records}
		r.SurprisalAgainst = "baseline"
	}
	for _, b := range c.Broken {
		out := Broken{Target: b.Target, Given: b.Given, BaselineBits: round(b.BaselineBits),
			NowBits: round(b.NowBits), Violations: b.Violations, Examples: []BreakCase{}}
		for _, e := range b.Examples {
			out.Examples = append(out.Examples, BreakCase{GivenValue: e.GivenValue, TargetValue: e.TargetValue,
				TargetAbsent: e.TargetAbsent, Expected: e.Expected, Count: e.Count})
		}
		r.Broken = append(r.Broken, out)
	}
	for _, sr := range c.Surprising {
		out := Surprising{Line: sr.Line, Time: r.logTime(sr.Time), Bits: round(sr.Bits), Record: sr.Record,
			Because: []string{}, Contributions: []Contribution{}}
		if len(sr.IDs) > 0 {
			out.IDs = sr.IDs
		}
		for _, ct := range sr.Because {
			out.Because = append(out.Because, ct.Field)
			out.Contributions = append(out.Contributions, Contribution{ct.Field, round(ct.Bits), round(ct.Excess), ct.Broke})
		}
		r.Surprising = append(r.Surprising, out)
	}
}

// shiftOf converts a field's shift (nil stays nil).
func shiftOf(sh *model.Shift) *Shift {
	if sh == nil {
		return nil
	}
	return &Shift{round(sh.JSD), round(sh.EntropyChange), round(sh.Z), sh.Binned, sh.Flagged}
}

// ShiftedFields lists the fields with a flagged shift, largest JSD first.
func (r *Report) ShiftedFields() []Field {
	var out []Field
	for _, f := range r.Fields {
		if f.Shift != nil && f.Shift.Flagged {
			out = append(out, f)
		}
	}
	sort.SliceStable(out, func(i, j int) bool { return out[i].Shift.JSD > out[j].Shift.JSD })
	return out
}
