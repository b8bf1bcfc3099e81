package report

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"sort"
	"strconv"
	"strings"
	"time"

	"bitsift/sanitize"
)

// Formats lists the values of -o that Write accepts.
var Formats = []string{"text", "json", "csv", "markdown", "html"}

// Write renders r in the named format.
func Write(w io.Writer, r *Report, format string) error {
	switch format {
	case "", "text":
		return WriteText(w, r)
	case "json":
		return WriteJSON(w, r)
	case "csv":
		return WriteCSV(w, r)
	case "markdown", "md":
		return WriteMarkdown(w, r)
	case "html":
		return WriteHTML(w, r, nil)
	}
	return fmt.Errorf("report: unknown output format %q (use one of %s)", format, strings.Join(Formats, ", "))
}

// WriteJSON writes the report as indented JSON.
func WriteJSON(w io.Writer, r *Report) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", " ")
	return enc.Encode(r)
}

// WriteCSV writes one row per field.
func WriteCSV(w io.Writer, r *Report) error {
	cw := csv.NewWriter(w)
	cw.Write([]string{"name", "kind", "present", "distinct", "entropy_bits", "entropy_mm_bits",
		"estimate", "bytes_per_record", "best_given", "residual_bits", "uncertainty_coefficient", "synthetic", "timestamp"})
	for _, f := range r.Fields {
		cw.Write([]string{f.Name, f.Kind, strconv.Itoa(f.Present), strconv.Itoa(f.Distinct),
			num(f.Entropy), num(f.EntropyMM), strconv.FormatBool(f.Estimate), num(f.BytesPerRecord),
			f.BestGiven, left(f.Residual, "%g"), num(f.Uncertainty), strconv.FormatBool(f.Synthetic), strconv.FormatBool(f.Timestamp)})
	}
	cw.Flush()
	if err := cw.Error(); err != nil {
		return err
	}
	return writeChangesCSV(w, r)
}

func num(x float64) string { return strconv.FormatFloat(x, 'f', -1, 64) }

// Dependency is a strong "given G, F is (nearly) known" relation.
type Dependency struct {
	Target, Given string
	Residual      float64 // H(target|given), bits
	U             float64 // U(target|given)
	Derived       bool
}

// Dependencies lists, for each non-constant field with a best predictor,
// that relation, strongest (highest U) first.
func (r *Report) Dependencies(limit int) []Dependency {
	var out []Dependency
	for _, f := range r.Fields {
		if f.BestGiven == "" || f.Kind == "constant" || f.Uncertainty < 0.5 {
			continue
		}
		out = append(out, Dependency{f.Name, f.BestGiven, *f.Residual, f.Uncertainty, f.Kind == "derived"})
	}
	sort.SliceStable(out, func(i, j int) bool {
		if out[i].U != out[j].U {
			return out[i].U > out[j].U
		}
		return out[i].Target < out[j].Target
	})
	if limit > 0 && len(out) > limit {
		out = out[:limit]
	}
	return out
}

// WriteText writes the report as a table readable at 80 columns. Every value
// from the log is sanitised.
func WriteText(w io.Writer, r *Report) error {
	b := &strings.Builder{}
	fmt.Fprintf(b, "bitsift: %d records in window %s", r.Records, windowText(r.Window))
	if r.Input.Format != "" {
		fmt.Fprintf(b, ", format %s (%.0f%% sure)", r.Input.Format, 100*r.Input.Confidence)
	}
	fmt.Fprintf(b, "\n%d lines read: %d records, %d rejected", r.Lines, r.Lines-r.Rejected-r.Parts-r.Filtered, r.Rejected)
	if r.Filtered > 0 || r.Narrowed != nil {
		fmt.Fprintf(b, ", %d left out by %s", r.Filtered, r.Narrowed.String())
	}
	if r.Parts > 0 {
		fmt.Fprintf(b, ", %d joined to the line after them", r.Parts)
	}
	b.WriteString("\n\n")
	hasTime := false
	fmt.Fprintf(b, "%-20s %-11s %6s %8s  %-16s %6s %6s\n",
		"FIELD", "KIND", "BITS", "DISTINCT", "BEST GIVEN", "LEFT", "B/REC")
	for _, f := range r.Fields {
		dist := strconv.Itoa(f.Distinct)
		if f.Estimate {
			dist = "~" + dist
		}
		best, left := "-", ""
		if f.BestGiven != "" {
			best, left = f.BestGiven, fmt.Sprintf("%.3f", *f.Residual)
		}
		kind := f.Kind
		if f.Timestamp {
			kind, hasTime = "timestamp", true
		}
		fmt.Fprintf(b, "%s %-11s %6.3f %8s  %s %6s %6.1f\n",
			sanitize.Pad(f.Name, 20), kind, f.Entropy, dist, sanitize.Pad(best, 16), left, f.BytesPerRecord)
	}
	b.WriteString("\nBITS: entropy H(F) per record; LEFT: bits of the field left once BEST GIVEN\nis known, H(F|G); B/REC: bytes of key and value per record.\n")
	writeSynthetic(b, r)
	if hasTime {
		b.WriteString("timestamp: the stream's time field, left out of pairs and best predictors\n(--analyse-time includes it).\n")
	}
	if deps := r.Dependencies(12); len(deps) > 0 {
		b.WriteString("\nStrongest dependencies (U = share of the field's bits the other explains):\n")
		for _, d := range deps {
			mark := ""
			if d.Derived {
				mark = "  derived"
			}
			fmt.Fprintf(b, "  %s ← %s  U=%.3f  H(F|G)=%.3f bits%s\n",
				sanitize.Fit(d.Target, 24), sanitize.Fit(d.Given, 24), d.U, d.Residual, mark)
		}
	}
	writeChanges(b, r)
	if r.LeftOutFields > 0 {
		fmt.Fprintf(b, "\n%d field names past the field cap were not tracked.\n", r.LeftOutFields)
	}
	if r.Rejected > 0 {
		shown := r.RejectedExamples
		if len(shown) > 5 {
			shown = shown[:5]
		}
		fmt.Fprintf(b, "\nRejected lines (first %d of %d; -o json lists %d):\n", len(shown), r.Rejected, len(r.RejectedExamples))
		for _, e := range shown {
			where := strconv.FormatInt(e.Line, 10)
			if e.Source != "" && e.Source != "-" && len(r.Input.Sources) > 1 {
				where = sanitize.Fit(e.Source, 20) + ":" + where
			}
			line := "  line " + where + ": " + e.Reason
			if e.Text != "" {
				line += ": " + sanitize.String(e.Text)
			}
			b.WriteString(sanitize.Fit(line, 79))
			b.WriteByte('\n')
		}
	}
	writeEvents(b, r.Events)
	for _, f := range r.Input.Faults {
		fmt.Fprintf(b, "\nfault: %s\n", sanitize.String(f))
	}
	if _, err := io.WriteString(w, b.String()); err != nil {
		return err
	}
	return writeGroups(w, r, false)
}

// writeSynthetic lists the fields bitsift made, so that no one takes them
// for fields of the log.
func writeSynthetic(b *strings.Builder, r *Report) {
	first := true
	for _, f := range r.Fields {
		if !f.Synthetic {
			continue
		}
		if first {
			b.WriteString("\nderived_by_bitsift (not in the log; made from another field):\n")
			first = false
		}
		fmt.Fprintf(b, "  %s ← %s: %s\n", sanitize.Fit(f.Name, 28), sanitize.Fit(f.DerivedFrom, 20), f.DerivedBy)
	}
}

// writeEvents lists the source events, faults aside (they are listed on
// their own below).
func writeEvents(b *strings.Builder, events []Event) {
	n := 0
	for _, e := range events {
		if e.Kind == "fault" {
			continue
		}
		if n == 0 {
			b.WriteString("\nSource events:\n")
		}
		n++
		at := e.Time
		if t, err := time.Parse(time.RFC3339Nano, e.Time); err == nil {
			at = t.Format("2006-01-02 15:04:05.000Z")
		}
		fmt.Fprintf(b, "  %s  %-9s %s\n", at, e.Kind, sanitize.String(e.Detail))
	}
}

func windowText(w Window) string {
	switch w.Kind {
	case "records":
		return fmt.Sprintf("last %v records", w.Size)
	case "duration":
		return fmt.Sprintf("last %v", w.Size)
	}
	return "all"
}

// WriteMarkdown writes the fields table as GitHub-flavoured Markdown.
func WriteMarkdown(w io.Writer, r *Report) error {
	b := &strings.Builder{}
	fmt.Fprintf(b, "**bitsift**: %d records, %d rejected of %d lines, window %s\n\n",
		r.Records, r.Rejected, r.Lines, windowText(r.Window))
	synth := false
	b.WriteString("| field | kind | bits | distinct | best given | H(F\\|G) bits | B/record |\n")
	b.WriteString("|---|---|--:|--:|---|--:|--:|\n")
	for _, f := range r.Fields {
		name := md(f.Name)
		if f.Synthetic {
			name += " †"
			synth = true
		}
		kind := f.Kind
		if f.Timestamp {
			kind = "timestamp"
		}
		fmt.Fprintf(b, "| %s | %s | %.3f | %d | %s | %s | %.1f |\n",
			name, kind, f.Entropy, f.Distinct, md(f.BestGiven), left(f.Residual, "%.3f"), f.BytesPerRecord)
	}
	if synth {
		b.WriteString("\n† derived by bitsift from another field, not in the log.\n")
	}
	writeChangesMarkdown(b, r)
	if _, err := io.WriteString(w, b.String()); err != nil {
		return err
	}
	return writeGroups(w, r, true)
}

func md(s string) string {
	s = sanitize.String(s)
	return strings.NewReplacer("|", `\|`, "*", `\*`, "_", `\_`, "`", "\\`", "<", "&lt;").Replace(s)
}
