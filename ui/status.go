package ui

import (
	"time"

	"bitsift/ingest"
	"bitsift/model"
	"bitsift/parse"
	"bitsift/sanitize"
)

// progress is how far through its input the source is: bytes of the
// total with an ETA when the total is known, else bytes read.
func progress(f *ingest.Frame) string {
	src := f.Source
	if src.BytesTotal <= 0 {
		return byteSize(src.BytesRead) + " read"
	}
	if !f.Ended && src.BytesRead >= src.BytesTotal && src.State != parse.StateDone {
		// A compressed file is read ahead of its lines: all its bytes
		// are in while lines still come, and 100% would read as done.
		return "all " + byteSize(src.BytesTotal) + " read in, lines still coming"
	}
	s := byteSize(src.BytesRead) + " of " + byteSize(src.BytesTotal) + " (" +
		percent(float64(src.BytesRead)/float64(src.BytesTotal)) + ")"
	switch {
	case f.Ended || src.BytesRead >= src.BytesTotal:
	case f.HasETA:
		// The replay's own estimate, which leaves its pauses out.
		s += " · ETA " + span(f.ETA)
	case f.BytesPerSec > 0:
		eta := time.Duration(float64(src.BytesTotal-src.BytesRead) / f.BytesPerSec * float64(time.Second))
		s += " · ETA " + span(eta)
	}
	return s
}

// fillText says how full the window is.
func fillText(s *model.Snapshot) string {
	w := s.Window
	switch w.Kind {
	case model.WindowRecords:
		return "window " + windowName(w) + " " + percent(float64(s.Records)/float64(w.Records)) + " full"
	case model.WindowDuration:
		covered := time.Duration(s.Newest - s.Oldest)
		return "window " + windowName(w) + " " + span(covered) + " of it"
	}
	return "window all · " + count(int64(s.Records)) + " rec"
}

// statusLines are the two lines always at the bottom.
func (m Model) statusLines() [2]string {
	st := m.e.st
	f := m.e.frame
	if f == nil {
		return [2]string{st.Muted.Render(" starting…"), ""}
	}
	state := string(f.Source.State)
	if state == "" {
		state = "reading"
	}
	badge := st.Badge[state]
	label := state
	switch f.Source.State {
	case parse.StateWaiting:
		label = "waiting for the file"
	case parse.StatePaused:
		label = "replay paused"
	}
	first := []string{" " + badge.Render("● "+label)}
	if m.paused {
		first[0] += " " + st.Badge["paused"].Render(" display paused ")
	}
	first = append(first,
		sanitize.Fit(f.Source.Name, max(12, m.w/4)),
		rateText(m, f),
		fillText(f.Snap),
	)
	if m.pendingWindow != nil {
		first[len(first)-1] += st.Warn.Render(" → " + windowName(*m.pendingWindow))
	}
	rej := "rejected " + count(f.Snap.Input.Rejected)
	if f.Snap.Input.Rejected > 0 {
		rej = st.Warn.Render(rej) + st.Muted.Render(" (r)")
	}
	ev := "events " + count(int64(len(f.Source.Events)))
	if len(f.Source.Events) > 0 {
		ev = st.Warn.Render(ev) + st.Muted.Render(" (e)")
	}
	second := []string{" " + rej, ev, count(f.Source.Lines) + " lines", progress(f)}
	if f.Err != nil {
		second = append(second, st.Bad.Render(sanitize.Fit("fault: "+f.Err.Error(), m.w/2)))
	} else if f.Source.Note != "" {
		second = append(second, sanitize.Fit(f.Source.Note, m.w/2))
	}
	hint := st.Muted.Render("? keys · q quit ")
	if m.flash != "" && m.e.now().Sub(m.flashAt) < flashFor {
		// After the counts, which stay in sight, in the room they leave.
		// Before the progress, which a narrow screen cuts first.
		used := sanitize.Width(ansiStrip(joinFit(second[:3], " · ", m.w)))
		if room := m.w - sanitize.Width(ansiStrip(hint)) - used - 4; room >= 12 {
			flash := st.Warn.Render(sanitize.Fit(m.flash, room))
			second = append(second[:3], append([]string{flash}, second[3:]...)...)
		}
	}
	left := joinFit(second, st.Muted.Render(" · "), m.w-sanitize.Width(ansiStrip(hint))-1)
	return [2]string{
		joinFit(first, st.Muted.Render(" · "), m.w),
		padRight(left, m.w-sanitize.Width(ansiStrip(hint))) + hint,
	}
}

// rateText is the records' rate, or why there is none now: a rate kept
// from before a pause or the end would read as current.
func rateText(m Model, f *ingest.Frame) string {
	switch {
	case m.paused:
		return "— rec/s"
	case f.Ended || f.Source.State == parse.StatePaused:
		return "0 rec/s"
	}
	return rate(f.RecordsPerSec) + " rec/s"
}
