package ingest

import (
	"strings"
	"unicode/utf8"

	"bitsift/companion"
	"bitsift/model"
	"bitsift/parse"
	"bitsift/sanitize"
)

// chooseCompanions chooses the companion fields (package companion) from
// the records of a detection sample, declares them and warms their
// template trees. A later sample (the next file of a multi-file read)
// adds companions for fields the earlier ones did not choose.
func (in *Ingester) chooseCompanions(sample []*parse.Record) {
	more := companion.Choose(sample, companion.Options{Templates: in.cfg.Templates})
	if in.redact != nil {
		// Nothing may be derived from a value that is meant to be hidden:
		// a template keeps a message's words, a bucket a number's range
		// (and a hash has neither).
		more.Keep(func(c companion.Companion) bool { return !in.redact.Redacting(c.Source()) })
	}
	if in.comp.Len() == 0 {
		in.comp = *more
		in.comp.Declare(in.model)
		if in.recordTemplates != nil {
			in.comp.Record(in.recordTemplates)
		}
		if in.replayTemplates != nil {
			in.comp.Replay(in.replayTemplates)
		}
	} else {
		companion.Declare(in.model, in.comp.Merge(more))
	}
	in.comp.Warm(sample)
}

// maxLabelText is the most of a template's text shown beside its id in a
// snapshot (a message template can be as long as a line; screens redraw
// the labels on every frame). annotate gives the whole text.
const maxLabelText = 160

// shorten cuts s to at most n bytes at a rune boundary, ending it with "…".
func shorten(s string, n int) string {
	if len(s) <= n {
		return s
	}
	for n > 0 && !utf8.RuneStart(s[n]) {
		n--
	}
	return s[:n] + "…"
}

// TemplateText returns the current text of the template whose id is value,
// for the template companion named field ("msg~template").
func (in *Ingester) TemplateText(field, value string) (string, bool) {
	return in.comp.Text(field, value)
}

// Companions lists the companion fields in use.
func (in *Ingester) Companions() []companion.Companion { return in.comp.List() }

// labelTemplates shows each template id in a snapshot with its group's
// current text ("#3 session opened for <*>"), in the values a person reads:
// top values, the detail table, broken rules and surprising records. The
// profile keeps the bare ids.
func (in *Ingester) labelTemplates(s *model.Snapshot) {
	if in.comp.Len() == 0 {
		return
	}
	label := func(field, v string) string {
		if !strings.HasSuffix(field, companion.TemplateSuffix) {
			return v
		}
		if t, ok := in.comp.Text(field, v); ok {
			// The text is a label for people, made from log values:
			// escaped here, so that no screen, report or plan that
			// shows it can be steered by what a log line holds.
			return v + " " + sanitize.String(shorten(t, maxLabelText))
		}
		return v
	}
	for i := range s.Fields {
		f := &s.Fields[i]
		if !strings.HasSuffix(f.Name, companion.TemplateSuffix) {
			continue
		}
		top := make([]model.ValueCount, len(f.Top))
		for j, vc := range f.Top {
			vc.Value = label(f.Name, vc.Value)
			top[j] = vc
		}
		f.Top = top
	}
	if d := s.Detail; d != nil {
		for r := range d.Rows {
			row := &d.Rows[r]
			row.Given.Value = label(d.Given, row.Given.Value)
			top := make([]model.ValueCount, len(row.Top))
			for j, vc := range row.Top {
				vc.Value = label(d.Field, vc.Value)
				top[j] = vc
			}
			row.Top = top
		}
	}
	if c := s.Changes; c != nil {
		for b := range c.Broken {
			br := &c.Broken[b]
			ex := make([]model.RuleBreak, len(br.Examples))
			for j, e := range br.Examples {
				e.GivenValue = label(br.Given, e.GivenValue)
				e.TargetValue = label(br.Target, e.TargetValue)
				e.Expected = label(br.Target, e.Expected)
				ex[j] = e
			}
			br.Examples = ex
		}
		for r := range c.Surprising {
			rec := c.Surprising[r].Record
			out := make(map[string]string, len(rec))
			for k, v := range rec {
				out[k] = label(k, v)
			}
			c.Surprising[r].Record = out
		}
	}
}
