package report

import (
	"fmt"
	"strings"

	"bitsift/sanitize"
)

// htmlChanges is what changed, for the HTML page: strings made safe here
// (html/template escapes them again for the page).
type htmlChanges struct {
	Method     string
	Timeline   *htmlTimeline
	Baseline   string
	Shifts     []htmlShift
	Broken     []htmlBroken
	Against    string
	Surprising []htmlSurprising
}

type htmlTimeline struct{ Rows []TimelineEntry }

type htmlShift struct{ Name, JSD, DH, Z string }

type htmlBroken struct {
	Rule, Bits, Given, New, Was, Where string
	Violations, Count                  int
}

type htmlSurprising struct {
	File, Time, Bits, Because, Record string
	Line                              int64
}

func htmlChangesOf(r *Report) htmlChanges {
	c := htmlChanges{Method: r.TimelineMethod, Against: "the window"}
	if r.Timeline != nil {
		c.Timeline = &htmlTimeline{}
		for _, e := range r.Timeline {
			e.Field, e.Given, e.File = sanitize.String(e.Field), sanitize.String(e.Given), sanitize.String(e.File)
			c.Timeline.Rows = append(c.Timeline.Rows, e)
		}
	}
	if r.Baseline != nil {
		c.Baseline = fmt.Sprintf("%s, %d records", sanitize.String(r.Baseline.Source), r.Baseline.Records)
		for _, f := range r.ShiftedFields() {
			c.Shifts = append(c.Shifts, htmlShift{sanitize.String(f.Name), fmt.Sprintf("%.4f", f.Shift.JSD),
				fmt.Sprintf("%+.3f", f.Shift.EntropyChange), zText(f.Shift.Z)})
		}
		for _, b := range r.Broken {
			rule := sanitize.String(b.Target) + " given " + sanitize.String(b.Given)
			bits := fmt.Sprintf("%.3f → %.3f", b.BaselineBits, b.NowBits)
			if len(b.Examples) == 0 {
				c.Broken = append(c.Broken, htmlBroken{Rule: rule, Bits: bits, Violations: b.Violations})
			}
			for _, e := range b.Examples {
				c.Broken = append(c.Broken, htmlBroken{Rule: rule, Bits: bits, Violations: b.Violations,
					Given: sanitize.String(e.GivenValue), New: sanitize.String(newValue(e)), Was: sanitize.String(e.Expected),
					Count: e.Count, Where: sanitize.String(e.Where())})
			}
		}
	}
	if r.SurprisalAgainst == "baseline" {
		c.Against = "the baseline"
	}
	for _, s := range r.Surprising {
		c.Surprising = append(c.Surprising, htmlSurprising{File: sanitize.String(s.File), Line: s.Line, Time: s.Time,
			Bits: fmt.Sprintf("%.1f", s.Bits), Because: sanitize.String(strings.Join(s.Because, ", ")), Record: recordText(s)})
	}
	return c
}
