package plan

import (
	"encoding/csv"
	"encoding/json"
	"io"
	"strings"

	"bitsift/sanitize"
)

// The exports a plan can be written as (bitsift plan --emit).
const (
	EmitJQ          = "jq"           // deletes the dropped fields
	EmitJQRestore   = "jq-restore"   // rebuilds them
	EmitOTel        = "otel"         // deletes them in an OpenTelemetry Collector
	EmitJQRecords   = "jq-records"   // samples and collapses routine records
	EmitOTelRecords = "otel-records" // the same in an OpenTelemetry Collector
)

// Emits lists every export.
var Emits = []string{EmitJQ, EmitJQRestore, EmitOTel, EmitJQRecords, EmitOTelRecords}

// EmitsFor lists the exports that can process records of the format: jq
// reads JSON only; the collector's configurations work on log record
// attributes, which its parsers make of any format (a JSON, regex,
// syslog or key-value parser in its receiver).
func EmitsFor(format string) []string {
	if format == "json" {
		return Emits
	}
	return []string{EmitOTel, EmitOTelRecords}
}

// Fits says whether the export can process records of the format.
func Fits(emit, format string) bool {
	for _, e := range EmitsFor(format) {
		if e == emit {
			return true
		}
	}
	return false
}

// cellText is a table value as a lookup table holds it: a JSON string's
// text without its quotes, any other JSON value as its JSON text.
func cellText(v TableValue, raw bool) string {
	if !raw || !strings.HasPrefix(v.Text, `"`) {
		return v.Text
	}
	var s string
	if json.Unmarshal([]byte(v.Text), &s) != nil {
		return v.Text
	}
	return s
}

// WriteTablesCSV writes the plan's constants and mapping tables as CSV,
// one row per table row, for a lookup at query time: field, from_field,
// from_value, value, note ("constant", "from absent": the record lacks
// the determinant, "value absent": the field is missing where the
// determinant has this value). Every cell is neutralised (csvCell).
func WriteTablesCSV(w io.Writer, p *Plan) error {
	cw := csv.NewWriter(w)
	cw.Write([]string{"field", "from_field", "from_value", "value", "note"})
	for _, f := range p.Fields {
		t := f.Table
		if t == nil || !f.Dropped() {
			continue
		}
		for _, r := range t.Rows {
			row := []string{f.Name, "", "", cellText(r.Value, t.JSON), ""}
			var notes []string
			if len(r.From) == 0 {
				notes = append(notes, "constant")
			} else {
				row[1] = strings.Join(f.From, "+")
				row[2] = cellText(r.From[0], t.JSON)
				if r.From[0].Absent {
					notes = append(notes, "from absent")
				}
			}
			if r.Value.Absent {
				notes = append(notes, "value absent")
			}
			row[4] = strings.Join(notes, ", ")
			for i := range row {
				row[i] = sanitize.CSVCell(row[i])
			}
			cw.Write(row)
		}
	}
	cw.Flush()
	return cw.Error()
}
