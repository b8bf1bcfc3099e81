package report

import (
	"fmt"
	"io"
	"strings"

	"bitsift/sanitize"
)

// Group is the report of the records with one value of the --by field.
// Its JSON is the group's whole report with "value" added.
type Group struct {
	Value string `json:"value"`
	// Absent: the group of records lacking the field.
	Absent bool `json:"absent,omitempty"`
	*Report
}

// groupTitle heads a group's section.
func (r *Report) groupTitle(g Group) string {
	v := sanitize.String(g.Value)
	if g.Absent {
		v = "(absent)"
	}
	return fmt.Sprintf("%s=%s: %d records", sanitize.String(r.By), v, g.Records)
}

// writeGroups adds a section per group to a text or Markdown report.
func writeGroups(w io.Writer, r *Report, markdown bool) error {
	if r.By == "" {
		return nil
	}
	note := ""
	if r.GroupsLeftOut > 0 {
		note = fmt.Sprintf(" (%d more values left out; narrow with --where %s=VALUE)", r.GroupsLeftOut, sanitize.String(r.By))
	}
	if markdown {
		fmt.Fprintf(w, "\n# By %s%s\n", md(r.By), md(note))
	} else {
		fmt.Fprintf(w, "\nBy %s: a section per value%s\n", sanitize.String(r.By), note)
	}
	for _, g := range r.Groups {
		var err error
		if markdown {
			_, err = fmt.Fprintf(w, "\n## %s\n\n", md(r.groupTitle(g)))
			if err == nil {
				err = WriteMarkdown(w, g.Report)
			}
		} else {
			t := "── " + r.groupTitle(g) + " "
			_, err = fmt.Fprintf(w, "\n%s%s\n", sanitize.Fit(t, 79), strings.Repeat("─", max(0, 79-len([]rune(t)))))
			if err == nil {
				err = WriteText(w, g.Report)
			}
		}
		if err != nil {
			return err
		}
	}
	return nil
}
