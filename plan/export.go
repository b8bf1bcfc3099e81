package plan

import (
	"encoding/json"
	"io"
	"math"
	"sort"
)

// Schema is the version tag of the JSON plan. Keys may be added within a
// version; none is renamed or removed.
const Schema = "bitsift.plan/1"

// Export is the plan as the JSON schema spells it.
type Export struct {
	Schema     string        `json:"schema"`
	Records    int           `json:"records"`
	MaxLoss    float64       `json:"max_loss_bits"`
	Drop       []string      `json:"drop"`
	Derive     []ExportDeriv `json:"derive"`
	BitsLost   float64       `json:"bits_lost_per_record"`
	Mismatches int           `json:"verified_mismatches"`
	// Verified: the plan was applied to a sample and rebuilt; false when
	// it was chosen from the figures alone (then verified_mismatches says
	// nothing).
	Verified        bool          `json:"verified"`
	BytesPerRecord  ExportBefore  `json:"bytes_per_record"`
	SavedPerDay     ExportSize    `json:"bytes_saved_per_day"`
	EntropyBound    float64       `json:"entropy_bound_bits_per_record"`
	Fields          []ExportField `json:"fields"`
	Lossless        bool          `json:"lossless"`
	MeasuredRecords int           `json:"measured_records"`
	SkippedLines    int           `json:"skipped_sample_lines"`
	Serialised      string        `json:"serialised_as"`
	Format          string        `json:"format"`
	Tables          ExportSize    `json:"table_bytes_per_record"`
	Saved           ExportSize    `json:"bytes_saved_per_record"`
	RecordsPerSec   *float64      `json:"records_per_second"`
	BoundAll        float64       `json:"entropy_bound_all_fields_bits_per_record"`
	Constants       []ExportConst `json:"constants"`
	Notes           []string      `json:"notes"`
	Caution         string        `json:"caution"`
	RuleCaution     string        `json:"rule_caution,omitempty"`
	// RecordReductions are the classes of routine records (measured plans
	// only); SamplingCaution is set when there are any.
	RecordReductions []ExportReduction `json:"record_reductions"`
	SamplingCaution  string            `json:"sampling_caution,omitempty"`
}

// ExportReduction is one class of routine records. bytes_saved_per_day is
// null when the record rate is unknown; bytes_saved_per_record is always
// there.
type ExportReduction struct {
	ID                 string          `json:"id"`
	Class              string          `json:"class"`
	Condition          string          `json:"condition"`
	Action             ReductionAction `json:"action"`
	KeepOneIn          float64         `json:"keep_one_in"`
	ShareRecords       float64         `json:"share_records"`
	ShareBytes         float64         `json:"share_bytes"`
	SavedPerDay        ExportSize      `json:"bytes_saved_per_day"`
	SavedPerRecord     ExportSize      `json:"bytes_saved_per_record"`
	BitsLost           float64         `json:"bits_lost_per_record"`
	BitsPerClassRecord float64         `json:"bits_per_class_record"`
	Ratio              float64         `json:"bits_per_byte_vs_stream,omitempty"`
	Ignore             []string        `json:"ignored_fields,omitempty"`
	Span               string          `json:"span,omitempty"`
	Findings           int             `json:"findings_in_class"`
	FindingExamples    []string        `json:"finding_examples"`
	Warning            string          `json:"warning,omitempty"`
	Pin                string          `json:"pin,omitempty"`
	Applied            bool            `json:"in_exports"`
}

// ExportDeriv is one derived field: the fields it is rebuilt from and the
// rows of its mapping table.
type ExportDeriv struct {
	Field        string      `json:"field"`
	From         []string    `json:"from"`
	TableEntries int         `json:"table_entries"`
	Exact        bool        `json:"exact"`
	Table        []ExportRow `json:"table"`
}

// ExportRow is one row of a mapping table: the determinants' values and
// the derived value. For JSON input the values are as the log wrote them
// (200 stays a number); for other formats they are strings. A value the
// record lacks is written {"absent": true}, which no log value can be: a
// non-empty object is never one field's value, its members are fields.
type ExportRow struct {
	From  []json.RawMessage `json:"from"`
	Value json.RawMessage   `json:"value"`
}

// ExportConst is a dropped constant and the value kept once (as the log
// wrote it, for JSON input).
type ExportConst struct {
	Field string          `json:"field"`
	Value json.RawMessage `json:"value"`
}

// absentJSON is how a table writes "the record lacks the field".
var absentJSON = json.RawMessage(`{"absent":true}`)

// JSON is the value as the plan's JSON writes it.
func (v TableValue) JSON(raw bool) json.RawMessage {
	switch {
	case v.Absent:
		return absentJSON
	case raw:
		return json.RawMessage(v.Text)
	}
	return json.RawMessage(appendJSONString(nil, v.Text))
}

func exportRows(t *Table) []ExportRow {
	rows := []ExportRow{}
	if t == nil {
		return rows
	}
	for _, r := range t.Rows {
		e := ExportRow{From: make([]json.RawMessage, len(r.From)), Value: r.Value.JSON(t.JSON)}
		for i, f := range r.From {
			e.From[i] = f.JSON(t.JSON)
		}
		rows = append(rows, e)
	}
	return rows
}

// ExportBefore holds the sizes before and after the plan.
type ExportBefore struct {
	Before ExportSize `json:"before"`
	After  ExportSize `json:"after"`
}

// ExportSize is a raw and a compressed size in bytes; nil is unknown.
type ExportSize struct {
	Raw        *float64 `json:"raw"`
	Compressed *float64 `json:"compressed"`
}

// ExportField is one field of the plan.
type ExportField struct {
	Name           string   `json:"name"`
	Entropy        float64  `json:"entropy_bits"`
	Huffman        float64  `json:"huffman_bits"`
	Action         Action   `json:"action"`
	Kind           string   `json:"kind"`
	Reason         string   `json:"reason"`
	From           []string `json:"from,omitempty"`
	Pin            string   `json:"pin,omitempty"`
	BitsLost       float64  `json:"bits_lost"`
	BytesPerRecord float64  `json:"bytes_per_record"`
	SampleEntropy  float64  `json:"sample_entropy_bits"`
	Mismatches     int      `json:"mismatches"`
	TableEntries   int      `json:"table_entries"`
}

func size(s Size) ExportSize {
	r, c := round(s.Raw), round(s.Compressed)
	return ExportSize{&r, &c}
}

// Export returns the plan in the shape of the JSON schema.
func (p *Plan) Export() *Export {
	e := &Export{
		Schema: Schema, Records: p.Records, MaxLoss: p.MaxLoss, Drop: []string{}, Derive: []ExportDeriv{},
		BitsLost: round(p.BitsLost), EntropyBound: round(p.EntropyAfter), BoundAll: round(p.EntropyBefore),
		Lossless: p.Lossless, Format: p.Format, Constants: []ExportConst{}, Notes: p.Notes, Caution: Caution,
		RuleCaution: ruleCaution(p),
	}
	if e.Notes == nil {
		e.Notes = []string{}
	}
	for _, f := range p.Fields {
		switch {
		case f.Action == Drop:
			e.Drop = append(e.Drop, f.Name)
			if f.Exact {
				v := TableValue{Text: f.Value}.JSON(false)
				if f.Table != nil && len(f.Table.Rows) == 1 {
					v = f.Table.Rows[0].Value.JSON(f.Table.JSON)
				}
				e.Constants = append(e.Constants, ExportConst{f.Name, v})
			}
		case f.Action == Derive:
			e.Derive = append(e.Derive, ExportDeriv{f.Name, f.From, f.TableEntries, f.Exact, exportRows(f.Table)})
		}
		e.Fields = append(e.Fields, ExportField{
			Name: f.Name, Entropy: round(f.Entropy), Huffman: round(f.Huffman), Action: f.Action,
			Kind: string(f.Kind), Reason: f.Reason, From: f.From, Pin: f.Pin.String(),
			BitsLost: round(f.BitsLost), BytesPerRecord: round(f.BytesPerRecord),
			SampleEntropy: round(f.SampleEntropy), Mismatches: f.Mismatches, TableEntries: f.TableEntries,
		})
	}
	if m := p.Measured; m != nil {
		e.Mismatches, e.Verified = m.Mismatches, true
		e.MeasuredRecords, e.SkippedLines, e.Serialised = m.Records, m.Skipped, m.Serialised
		e.BytesPerRecord = ExportBefore{size(m.Before), size(m.After)}
		e.Tables, e.Saved = size(m.Tables), size(m.Saved())
	}
	if d, ok := p.SavedPerDay(); ok {
		r, c := math.Round(d.Raw), math.Round(d.Compressed)
		e.SavedPerDay = ExportSize{&r, &c}
		rate := round(p.RecordsPerSecond)
		e.RecordsPerSec = &rate
	}
	e.RecordReductions = []ExportReduction{}
	for i := range p.Reductions {
		r := &p.Reductions[i]
		x := ExportReduction{ID: r.ID, Class: r.Class, Condition: r.Condition(), Action: r.Action,
			KeepOneIn: round(r.KeepOneIn), ShareRecords: round(r.ShareRecords), ShareBytes: round(r.ShareBytes),
			SavedPerRecord: size(r.Saved), BitsLost: round(r.BitsLostPerRecord), BitsPerClassRecord: round(r.BitsPerClassRecord),
			Ratio: round(r.Ratio), Ignore: r.Ignore, Span: r.Span, Findings: r.Findings,
			FindingExamples: append([]string{}, r.FindingExamples...), Warning: r.Warning(), Pin: r.Pin.String(), Applied: r.Applied()}
		if p.RecordsPerSecond > 0 {
			d := p.RecordsPerSecond * 86400
			raw, c := math.Round(r.Saved.Raw*d), math.Round(r.Saved.Compressed*d)
			x.SavedPerDay = ExportSize{&raw, &c}
		}
		e.RecordReductions = append(e.RecordReductions, x)
	}
	if len(p.Reductions) > 0 {
		e.SamplingCaution = SamplingCaution
	}
	sort.Strings(e.Drop)
	return e
}

// WriteJSON writes the plan as indented JSON.
func WriteJSON(w io.Writer, p *Plan) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", " ")
	return enc.Encode(p.Export())
}

// round keeps 6 decimals: plans are read by people and diffed.
func round(x float64) float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return 0
	}
	return math.Round(x*1e6) / 1e6
}

// ruleCaution is RuleCaution for a plan that derives fields, else "".
func ruleCaution(p *Plan) string {
	for _, f := range p.Fields {
		if f.Action == Derive {
			return RuleCaution
		}
	}
	return ""
}
