package report

import (
	"encoding/csv"
	"fmt"
	"io"
	"sort"
	"strconv"
	"strings"

	"bitsift/sanitize"
)

// writeChangesMarkdown adds what changed to a Markdown report: the
// timeline, shifts and broken rules against the baseline, and the
// surprising records, each a table.
func writeChangesMarkdown(b *strings.Builder, r *Report) {
	if r.Timeline != nil {
		b.WriteString("\n## Timeline\n\n")
		if r.TimelineMethod != "" {
			b.WriteString("What changed along the log, and when (" + md(r.TimelineMethod) + ").\n\n")
		}
		if len(r.Timeline) == 0 {
			b.WriteString("No rule broke and no field shifted, went or came.\n")
		} else {
			b.WriteString("| kind | field | given | file | first line | first time | last line | last time | records |\n")
			b.WriteString("|---|---|---|---|--:|---|--:|---|--:|\n")
			for _, e := range r.Timeline {
				fmt.Fprintf(b, "| %s | %s | %s | %s | %d | %s | %d | %s | %d |\n", e.Kind, md(e.Field), md(e.Given),
					md(e.File), e.FirstLine, e.FirstTime, e.LastLine, e.LastTime, e.Count)
			}
		}
	}
	if r.Baseline != nil {
		fmt.Fprintf(b, "\n## What changed against the baseline\n\nBaseline: %s, %d records.\n\n", md(r.Baseline.Source), r.Baseline.Records)
		if shifted := r.ShiftedFields(); len(shifted) == 0 {
			b.WriteString("No field's distribution shifted.\n")
		} else {
			b.WriteString("| shifted field | JSD bits | ΔH bits | z |\n|---|--:|--:|--:|\n")
			for _, f := range shifted {
				fmt.Fprintf(b, "| %s | %.4f | %+.3f | %s |\n", md(f.Name), f.Shift.JSD, f.Shift.EntropyChange, zText(f.Shift.Z))
			}
		}
		if len(r.Broken) == 0 {
			b.WriteString("\nNo rule of the baseline broke.\n")
		} else {
			b.WriteString("\n### Broken rules\n\n| target | given | baseline bits | now bits | records breaking it | given value | new value | was | count | newest at |\n")
			b.WriteString("|---|---|--:|--:|--:|---|---|---|--:|---|\n")
			for _, br := range r.Broken {
				for i, e := range br.Examples {
					head := fmt.Sprintf("| %s | %s | %.3f | %.3f | %d ", md(br.Target), md(br.Given), br.BaselineBits, br.NowBits, br.Violations)
					if i > 0 {
						head = "| | | | | "
					}
					fmt.Fprintf(b, "%s| %s | %s | %s | %d | %s |\n", head, md(e.GivenValue), md(newValue(e)), md(e.Expected), e.Count, md(e.Where()))
				}
				if len(br.Examples) == 0 {
					fmt.Fprintf(b, "| %s | %s | %.3f | %.3f | %d | | | | | |\n", md(br.Target), md(br.Given), br.BaselineBits, br.NowBits, br.Violations)
				}
			}
		}
	}
	if len(r.Surprising) > 0 {
		against := "the window"
		if r.SurprisalAgainst == "baseline" {
			against = "the baseline"
		}
		fmt.Fprintf(b, "\n## Most surprising records\n\nBits of surprisal against %s.\n\n", against)
		b.WriteString("| file | line | time | bits | because | record |\n|---|--:|---|--:|---|---|\n")
		for _, s := range r.Surprising {
			fmt.Fprintf(b, "| %s | %d | %s | %.1f | %s | %s |\n", md(s.File), s.Line, s.Time, s.Bits,
				md(strings.Join(s.Because, ", ")), md(recordText(s)))
		}
	}
}

func zText(z float64) string {
	if z == 0 {
		return "-"
	}
	return fmt.Sprintf("%.1f", z)
}

func newValue(e BreakCase) string {
	if e.TargetAbsent {
		return "(absent)"
	}
	return e.TargetValue
}

// Where is the example's newest record as "file:line time" ("" when not
// traced).
func (e BreakCase) Where() string {
	if e.Line == 0 {
		return ""
	}
	s := strconv.FormatInt(e.Line, 10)
	if e.File != "" {
		s = e.File + ":" + s
	}
	if e.Time != "" {
		s += " " + e.Time
	}
	return s
}

// changeRows are what changed as CSV rows under one header: a section
// column says which list a row is from.
func changeRows(r *Report) [][]string {
	rows := [][]string{{"section", "kind", "field", "given", "file", "first_line", "first_time", "last_line", "last_time",
		"count", "value", "detail"}}
	for _, e := range r.Timeline {
		rows = append(rows, []string{"timeline", e.Kind, e.Field, e.Given, e.File, itoa(e.FirstLine), e.FirstTime,
			itoa(e.LastLine), e.LastTime, strconv.Itoa(e.Count), "", ""})
	}
	for _, f := range r.ShiftedFields() {
		rows = append(rows, []string{"shift", "shift", f.Name, "", "", "", "", "", "", "", num(f.Shift.JSD),
			fmt.Sprintf("jsd_bits; entropy_change_bits %s; z %s", num(f.Shift.EntropyChange), num(f.Shift.Z))})
	}
	for _, br := range r.Broken {
		rows = append(rows, []string{"broken", "rule", br.Target, br.Given, "", "", "", "", "", strconv.Itoa(br.Violations), "",
			fmt.Sprintf("baseline_bits %s; now_bits %s", num(br.BaselineBits), num(br.NowBits))})
		for _, e := range br.Examples {
			rows = append(rows, []string{"broken", "example", br.Target, br.Given, e.File, itoa(e.Line), e.Time, "", "",
				strconv.Itoa(e.Count), newValue(e), "given " + e.GivenValue + "; was " + e.Expected})
		}
	}
	for _, s := range r.Surprising {
		keys := make([]string, 0, len(s.IDs))
		for k := range s.IDs {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		ids := ""
		for _, k := range keys {
			ids += k + "=" + s.IDs[k] + " "
		}
		rows = append(rows, []string{"surprising", "record", strings.Join(s.Because, " "), "", s.File, itoa(s.Line), s.Time,
			"", "", "", num(s.Bits), strings.TrimSpace(ids + recordText(s))})
	}
	return rows
}

func itoa(x int64) string {
	if x == 0 {
		return ""
	}
	return strconv.FormatInt(x, 10)
}

// writeChangesCSV writes, after the fields, a blank line and the change
// rows (changeRows) when there are any. Cells from the log that a
// spreadsheet would take for a formula are quoted as text (OWASP's advice
// on CSV injection: a leading apostrophe).
func writeChangesCSV(w io.Writer, r *Report) error {
	rows := changeRows(r)
	if len(rows) == 1 {
		return nil
	}
	if _, err := io.WriteString(w, "\n"); err != nil {
		return err
	}
	cw := csv.NewWriter(w)
	for _, row := range rows {
		for i, c := range row {
			row[i] = sanitize.CSVCell(c)
		}
		cw.Write(row)
	}
	cw.Flush()
	return cw.Error()
}
