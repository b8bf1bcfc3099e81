// Package report renders a model snapshot for people and scripts: an
// 80-column text table, JSON (a versioned schema, bitsift.report/1), CSV and
// Markdown.
package report

import (
	"math"
	"sort"

	"bitsift/model"
)

// Schema is the version tag of the JSON report. Fields may be added within a
// version; none is renamed or removed.
const Schema = "bitsift.report/1"

// Report is the report's data, as the JSON schema spells it.
type Report struct {
	Schema           string            `json:"schema"`
	Records          int               `json:"records"`
	Rejected         int64             `json:"rejected"`
	Lines            int64             `json:"lines"`
	RejectedExamples []model.Rejection `json:"rejected_examples"`
	Window           Window            `json:"window"`
	Input            Input             `json:"input"`
	Fields           []Field           `json:"fields"`
	Pairs            []Pair            `json:"pairs"`
	LeftOutFields    int               `json:"left_out_fields,omitempty"`

	// snap is the snapshot the report was built from: the HTML page
	// chooses a drop plan from it when none is given (only then, as a
	// plan costs more than the report).
	snap *model.Snapshot
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
	Residual       float64 `json:"residual_bits"`
	Uncertainty    float64 `json:"uncertainty_coefficient"`
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
		RejectedExamples: s.Input.RejectedExamples,
		Input: Input{
			Sources:    s.Input.Sources,
			Format:     s.Input.Format,
			Confidence: round(s.Input.Confidence),
			Faults:     s.Input.Faults,
		},
		LeftOutFields: s.LeftOutFields,
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
		r.Fields = append(r.Fields, Field{
			Name: f.Name, Kind: string(f.Kind), Present: f.Present, Distinct: f.Distinct,
			Entropy: round(f.Entropy), EntropyMM: round(f.EntropyMM), Estimate: f.Estimate,
			BytesPerRecord: round(f.BytesPerRecord), BestGiven: f.BestGiven,
			Residual: round(f.Residual), Uncertainty: round(f.Uncertainty),
		})
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
