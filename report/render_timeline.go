package report

import (
	"fmt"
	"strings"
	"time"

	"bitsift/sanitize"
)

const textTimeline = 12

// writeTimeline adds the timeline to a text report, within 80 columns.
func writeTimeline(b *strings.Builder, r *Report) {
	if r.Timeline == nil {
		return
	}
	b.WriteString("\nTimeline: what changed along the log, and when")
	if r.TimelineMethod != "" {
		b.WriteString("\n(" + r.TimelineMethod + ")")
	}
	b.WriteString(":\n")
	if len(r.Timeline) == 0 {
		b.WriteString("  No rule broke and no field shifted, went or came.\n")
		return
	}
	many := len(r.Input.Sources) > 1
	for i, e := range r.Timeline {
		if i == textTimeline {
			fmt.Fprintf(b, "  ... %d more in the JSON report\n", len(r.Timeline)-i)
			break
		}
		b.WriteString(sanitize.Fit(fmt.Sprintf("  %-6s %s: %d %s", e.Kind, e.What(), e.Count, e.countWord()), 79) + "\n")
		b.WriteString(sanitize.Fit("    "+e.Span(many), 79) + "\n")
	}
}

// What names the finding: "upstream given route", "status".
func (e TimelineEntry) What() string {
	if e.Given != "" {
		return e.Field + " given " + e.Given
	}
	return e.Field
}

// Span says where it was seen: lines and times first to last; file names the file when the report has several.
func (e TimelineEntry) Span(file bool) string {
	s := ""
	if file && e.File != "" {
		s = e.File + ": "
	}
	s += fmt.Sprintf("lines %d–%d", e.FirstLine, e.LastLine)
	t0, err0 := time.Parse(time.RFC3339Nano, e.FirstTime)
	t1, err1 := time.Parse(time.RFC3339Nano, e.LastTime)
	if err0 == nil && err1 == nil {
		last := t1.Format("15:04:05.000Z")
		if t1.Format("20060102") != t0.Format("20060102") {
			last = t1.Format("2006-01-02 ") + last
		}
		s += " · " + t0.Format("2006-01-02 15:04:05.000") + " → " + last
	}
	return s
}

func (e TimelineEntry) countWord() string {
	switch e.Kind {
	case "broken":
		return "records break it"
	case "gone":
		return "records without it"
	case "new":
		return "records with it"
	}
	return "records"
}
