// Package report renders a model snapshot for people and scripts: an
// 80-column text table, JSON (a versioned schema, bitsift.report/1), CSV and
// Markdown.
package report

import (
	"fmt"
	"math"
	"sort"
	"time"

	"bitsift/model"
)

// Schema is the version tag of the JSON report. Fields may be added within a
// version; none is renamed or removed.
const Schema = "bitsift.report/1"

// Report is the report's data, as the JSON schema spells it.
type Report struct {
	Schema   string `json:"schema"`
	Records  int    `json:"records"`
	Rejected int64  `json:"rejected"`
	Lines    int64  `json:"lines"`
	// Parts counts lines joined into a record with the lines after them
	// (CRI partial lines): lines = records read + rejected + parts.
	Parts int64 `json:"parts,omitempty"`
	// Filtered counts records left out by --where, --since and --until
	// (lines = records read + rejected + parts + filtered); Narrowed says
	// how the stream was narrowed.
	Filtered         int64             `json:"filtered,omitempty"`
	Narrowed         *Narrow           `json:"narrowed,omitempty"`
	RejectedExamples []model.Rejection `json:"rejected_examples"`
	Window           Window            `json:"window"`
	Input            Input             `json:"input"`
	Fields           []Field           `json:"fields"`
	Pairs            []Pair            `json:"pairs"`
	LeftOutFields    int               `json:"left_out_fields,omitempty"`
	// Events are what happened to the sources while they were read:
	// rotations, truncations, missing files, shortened replay gaps, faults.
	Events []Event `json:"events"`

	// Baseline is what the window was compared with (--baseline); absent
	// without one.
	Baseline *Baseline `json:"baseline,omitempty"`
	// Broken lists the baseline's rules that no longer hold.
	Broken []Broken `json:"broken"`
	// Surprising lists the most surprising records; SurprisalAgainst says
	// whether they were priced by the "baseline" or the "window".
	Surprising       []Surprising `json:"surprising"`
	SurprisalAgainst string       `json:"surprisal_against,omitempty"`
	// Determinants lists minimal multi-field determinants.
	Determinants    []Determinant `json:"determinants"`
	DeterminantsCut bool          `json:"determinants_cut,omitempty"`
	// DeepRecords is how many of the newest records of the window the
	// determinants and surprising records cover (see
	// model.DeepMaxRecords); absent when they were not computed.
	DeepRecords int `json:"deep_records,omitempty"`
	// Timeline lists what changed along log time (see TimelineEntry);
	// TimelineMethod says how it was found. Absent when not computed.
	Timeline       []TimelineEntry `json:"timeline"`
	TimelineMethod string          `json:"timeline_method,omitempty"`
	// By is the field of --by; Groups the report of each of its most
	// frequent values, GroupsLeftOut how many values had none.
	By            string  `json:"by,omitempty"`
	Groups        []Group `json:"groups,omitempty"`
	GroupsLeftOut int     `json:"groups_left_out,omitempty"`
	// Profile is this window's profile: give this report to --baseline
	// of a later run to compare with it.
	Profile *model.Profile `json:"profile,omitempty"`

	// snap is the snapshot the report was built from: the HTML page
	// chooses a drop plan from it when none is given (only then, as a
	// plan costs more than the report).
	snap *model.Snapshot
}

// Event is one thing that happened to a source.
type Event struct {
	Time   string `json:"time"` // RFC 3339 with nanoseconds
	Kind   string `json:"kind"` // rotated, truncated, missing, appeared, gap, fault
	Detail string `json:"detail"`
}

// Window describes the window the figures cover.
type Window struct {
	Kind string `json:"kind"`
	// Size is the record count for kind "records", the duration (Go
	// syntax, e.g. "5m0s") for "duration", and the record count for "all".
	Size any `json:"size"`
}

// Input says where the records came from.
type Input struct {
	Sources    []string `json:"sources"`
	Format     string   `json:"format"`
	Confidence float64  `json:"format_confidence"`
	Faults     []string `json:"faults,omitempty"`
	// TimeField and TimeFormat are the stream's timestamp field and its
	// format (rfc3339, epoch, syslog, access), when one was found.
	TimeField  string `json:"time_field,omitempty"`
	TimeFormat string `json:"time_format,omitempty"`
}

// Field is one field's figures.
type Field struct {
	Name           string  `json:"name"`
	Kind           string  `json:"kind"`
	Present        int     `json:"present"`
	Distinct       int     `json:"distinct"`
	Entropy        float64 `json:"entropy_bits"`
	EntropyMM      float64 `json:"entropy_mm_bits"`
	Estimate       bool    `json:"estimate"`
	BytesPerRecord float64 `json:"bytes_per_record"`
	BestGiven      string  `json:"best_given"`
	// Residual is H(F|best_given), null when the field has no best
	// predictor (not 0: a script looking for zero residuals would find
	// the identifiers).
	Residual    *float64 `json:"residual_bits"`
	Uncertainty float64  `json:"uncertainty_coefficient"`
	// Synthetic is set for a companion field that bitsift made from
	// another (FIELD~log, FIELD~template): it is not in the log.
	Synthetic bool `json:"synthetic"`
	// DerivedFrom and DerivedBy say, for a synthetic field, from which
	// field and how bitsift made it.
	DerivedFrom string `json:"derived_from,omitempty"`
	DerivedBy   string `json:"derived_by,omitempty"`
	// Timestamp: the stream's timestamp field, left out of pairs and best
	// predictors (--analyse-time includes it).
	Timestamp bool `json:"timestamp"`
	// RFI is the reliable fraction of information best_given gives;
	// EMIApprox says its expected mutual information was approximated.
	RFI       float64 `json:"rfi"`
	EMIApprox bool    `json:"emi_approx"`
	// Shift compares the field with the baseline; absent without one.
	Shift *Shift `json:"shift,omitempty"`
}

// Pair is one ordered pair of fields.
type Pair struct {
	Target      string  `json:"target"`
	Given       string  `json:"given"`
	Joint       float64 `json:"joint_bits"`
	Conditional float64 `json:"conditional_bits"`
	Mutual      float64 `json:"mutual_bits"`
}

// Build turns a snapshot into a report.
func Build(s *model.Snapshot) *Report {
	r := &Report{
		Schema:           Schema,
		Records:          s.Records,
		Rejected:         s.Input.Rejected,
		Lines:            s.Input.Lines,
		Parts:            s.Input.Parts,
		Filtered:         s.Input.Filtered,
		RejectedExamples: s.Input.RejectedExamples,
		Input: Input{
			Sources:    s.Input.Sources,
			Format:     s.Input.Format,
			Confidence: round(s.Input.Confidence),
			Faults:     s.Input.Faults,
			TimeField:  s.Input.TimeField,
			TimeFormat: s.Input.TimeFormat,
		},
		LeftOutFields: s.LeftOutFields,
	}
	r.Events = []Event{}
	r.Fields = []Field{} // never null in JSON, also with no records
	for _, e := range s.Input.Events {
		r.Events = append(r.Events, Event{Time: e.Time.UTC().Format(time.RFC3339Nano), Kind: e.Kind, Detail: e.Detail})
	}
	if r.RejectedExamples == nil {
		r.RejectedExamples = []model.Rejection{}
	}
	r.Window.Kind = s.Window.Kind.String()
	switch s.Window.Kind {
	case model.WindowRecords:
		r.Window.Size = s.Window.Records
	case model.WindowDuration:
		r.Window.Size = s.Window.Duration.String()
	default:
		r.Window.Size = s.Records
	}
	r.snap = s
	order := sortedFields(s)
	for _, i := range order {
		f := &s.Fields[i]
		rf := Field{
			Name: f.Name, Kind: string(f.Kind), Present: f.Present, Distinct: f.Distinct,
			Entropy: round(f.Entropy), EntropyMM: round(f.EntropyMM), Estimate: f.Estimate,
			BytesPerRecord: round(f.BytesPerRecord), BestGiven: f.BestGiven,
			Residual: residualOf(f), Uncertainty: round(f.Uncertainty), Timestamp: f.Timestamp,
			RFI: round(f.RFI), EMIApprox: f.EMIApprox, Shift: shiftOf(f.Shift),
		}
		if f.Synthetic != nil {
			rf.Synthetic, rf.DerivedFrom, rf.DerivedBy = true, f.Synthetic.Source, f.Synthetic.Method
		}
		r.Fields = append(r.Fields, rf)
	}
	r.Pairs = []Pair{}
	for _, i := range order {
		for _, j := range order {
			if !s.HasPair(i, j) || s.Fields[i].Kind == model.Identifier || s.Fields[j].Kind == model.Identifier {
				continue
			}
			r.Pairs = append(r.Pairs, Pair{
				Target: s.Fields[i].Name, Given: s.Fields[j].Name,
				Joint: round(s.Joint(i, j)), Conditional: round(s.Cond(i, j)), Mutual: round(s.Mutual(i, j)),
			})
		}
	}
	addChanges(r, s)
	return r
}

// sortedFields orders fields by name, so reports diff well between runs.
func sortedFields(s *model.Snapshot) []int {
	idx := make([]int, len(s.Fields))
	for i := range idx {
		idx[i] = i
	}
	sort.Slice(idx, func(a, b int) bool { return s.Fields[idx[a]].Name < s.Fields[idx[b]].Name })
	return idx
}

// round keeps 9 decimals (below a nanobit nothing is meaningful) so that
// reports are stable across platforms.
func round(x float64) float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return 0
	}
	return math.Round(x*1e9) / 1e9
}

// residualOf is the field's H(F|G) for its best predictor, nil without one.
func residualOf(f *model.FieldStats) *float64 {
	if f.BestGiven == "" {
		return nil
	}
	x := round(f.Residual)
	return &x
}

// left is a residual as text: "" when there is none.
func left(x *float64, format string) string {
	if x == nil {
		return ""
	}
	return fmt.Sprintf(format, *x)
}
