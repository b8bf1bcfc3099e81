package ui

import (
	"time"

	"bitsift/model"
	"bitsift/sanitize"
)

// timelineShown is how many timeline entries the Drift page lists: the
// newest.
const timelineShown = 10

// timeline lists what changed while the screen ran, newest first, kept
// after it left the window (model.TimelineBook): each finding with the
// first and last frame it was seen in (time of the newest record, line
// read). Enter opens the lines behind an entry where the window still
// has them.
func (v driftView) timeline() ([]string, []driftItem) {
	st := v.env.st
	b := v.env.timeline
	if b == nil {
		return nil, nil
	}
	entries := b.Entries()
	out := []string{st.Title.Render("TIMELINE") + "  " + count(int64(len(entries))) +
		st.Muted.Render(" · ● now ✓ over · kept after it left the window · time and line read")}
	if len(entries) == 0 {
		return append(out, st.Muted.Render("  nothing yet: no rule broke, no field shifted, went or came")), nil
	}
	var items []driftItem
	for i := len(entries) - 1; i >= 0 && len(entries)-i <= timelineShown; i-- {
		e := entries[i]
		what := sanitize.String(e.Field)
		if e.Given != "" {
			what += " given " + sanitize.String(e.Given)
		}
		state := st.Muted.Render("✓ ")
		if b.Current(i) {
			state = st.Warn.Render("● ")
		}
		line := "  " + state + padRight(e.Kind, 6) + " " + what + "  " + stamps(e.First, e.Last)
		if it, ok := timelineItem(v.env, b, i, e); ok {
			it.line = len(out)
			items = append(items, it)
		}
		out = append(out, ansiFit(line, v.w))
	}
	return out, items
}

// stamps say when a timeline entry was first and last seen: the newest
// record's time then, and the lines read.
func stamps(a, b model.Trace) string {
	s := ""
	if a.Time != 0 && b.Time != 0 {
		s = time.Unix(0, a.Time).UTC().Format("15:04:05") + "→" + time.Unix(0, b.Time).UTC().Format("15:04:05") + "  "
	}
	return s + "l." + count(a.Line) + "→" + count(b.Line)
}

// timelineItem is what finds the records behind entry i.
func timelineItem(e *env, b *model.TimelineBook, i int, en model.TimelineEntry) (driftItem, bool) {
	field := sanitize.String(en.Field)
	switch en.Kind {
	case model.TimelineBroken:
		ex := b.Example(i)
		if ex.GivenValue == "" {
			return driftItem{}, false
		}
		return driftItem{title: sanitize.String(en.Given) + "=" + sanitize.String(ex.GivenValue) + " → " + field + "=" + sanitize.String(ex.TargetValue),
			conds: []model.Cond{{Field: en.Given, Value: ex.GivenValue}, {Field: en.Field, Value: ex.TargetValue, Absent: ex.TargetAbsent}}}, true
	case model.TimelineGone:
		return driftItem{title: "records without " + field, conds: []model.Cond{{Field: en.Field, Absent: true}}}, true
	case model.TimelineNew:
		return driftItem{title: "records with " + field, conds: []model.Cond{{Field: en.Field, Absent: true, Not: true}}}, true
	case model.TimelineShift:
		if f := e.frame; f != nil {
			return shiftItem(f.Snap, en.Field, 0), true
		}
	}
	return driftItem{}, false
}
