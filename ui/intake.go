package ui

import (
	"strings"

	"github.com/charmbracelet/bubbles/viewport"
	tea "github.com/charmbracelet/bubbletea"

	"bitsift/ingest"
	"bitsift/model"
	"bitsift/sanitize"
)

// intakeView is the Input screen: the source in detail, the first rejected
// lines with their reasons, and the source's events (rotation, truncation,
// faults).
type intakeView struct {
	env  *env
	w, h int
	vp   viewport.Model
	// Lines of the page where the rejected and events sections start.
	rejectedAt, eventsAt int
}

func newIntakeView(e *env) intakeView { return intakeView{env: e, vp: viewport.New(0, 0)} }

func (v intakeView) setSize(w, h int) intakeView {
	v.w, v.h = w, h
	v.vp.Width, v.vp.Height = w, h
	return v.refresh()
}

// jump scrolls to a section: "rejected" or "events".
func (v intakeView) jump(section string) intakeView {
	v = v.refresh()
	switch section {
	case "rejected":
		v.vp.SetYOffset(v.rejectedAt)
	case "events":
		v.vp.SetYOffset(v.eventsAt)
	}
	return v
}

// Update handles scrolling.
func (v intakeView) Update(msg tea.Msg) (intakeView, tea.Cmd) {
	if s, ok := scrollOf(v.env.keys, msg, v.h); ok {
		scrollViewport(&v.vp, s)
	}
	return v, nil
}

// View draws exactly h lines.
func (v intakeView) View() string { return fill(strings.Split(v.vp.View(), "\n"), v.h) }

func (v intakeView) refresh() intakeView {
	f := v.env.frame
	if f == nil {
		v.vp.SetContent(v.env.st.Muted.Render("  waiting for the source…"))
		return v
	}
	lines := v.page(f)
	y := v.vp.YOffset
	v.vp.SetContent(strings.Join(lines, "\n"))
	v.vp.SetYOffset(y)
	return v
}

func (v *intakeView) page(f *ingest.Frame) []string {
	st := v.env.st
	src, in := f.Source, f.Snap.Input
	w := v.w
	kv := func(k, val string) string { return st.Header.Render(padRight(k, 10)) + ansiFit(val, w-10) }
	out := []string{
		st.Title.Render("SOURCE"),
		kv("name", sanitize.String(src.Name)),
		kv("state", string(src.State)),
		kv("bytes", progress(f)),
		kv("lines", count(src.Lines)+" ("+rate(f.LinesPerSec)+" lines/s)"),
		kv("records", recordsText(f.Snap)),
	}
	if in.Format != "" {
		out = append(out, kv("format", in.Format+" (confidence "+formatFloat(in.Confidence, 2)+")"))
	}
	if src.Note != "" {
		out = append(out, kv("note", sanitize.String(src.Note)))
	}
	for _, fault := range in.Faults {
		out = append(out, kv("fault", st.Bad.Render(sanitize.String(fault))))
	}
	out = append(out, partLines(v.env, src.Parts, w)...)
	out = append(out, "")
	v.rejectedAt = len(out)
	head := "REJECTED  " + count(in.Rejected) + " of " + count(in.Lines) + " lines"
	if n := len(in.RejectedExamples); int64(n) < in.Rejected {
		head += " (the first " + count(int64(n)) + " shown)"
	}
	out = append(out, st.Title.Render(head))
	if len(in.RejectedExamples) == 0 {
		out = append(out, st.Muted.Render("  every line so far is a record"))
	}
	for _, r := range in.RejectedExamples {
		where := "line " + count(r.Line)
		if r.Source != "" {
			where = sanitize.String(r.Source) + ":" + count(r.Line)
		}
		out = append(out, "  "+st.Warn.Render(ansiFit(where, w/2))+"  "+ansiFit(sanitize.String(r.Reason), w-4-sanitize.Width(ansiFit(where, w/2))))
		if r.Text != "" {
			out = append(out, "    "+st.Muted.Render(sanitize.Fit(r.Text, w-4)))
		}
	}
	out = append(out, "")
	v.eventsAt = len(out)
	out = append(out, st.Title.Render("EVENTS  "+count(int64(len(src.Events)))))
	if len(src.Events) == 0 {
		out = append(out, st.Muted.Render("  none: no rotation, truncation or fault so far"))
	}
	for _, e := range src.Events {
		out = append(out, "  "+e.Time.Format("15:04:05")+"  "+st.Warn.Render(padRight(sanitize.String(e.Kind), 10))+" "+sanitize.Fit(e.Detail, w-23))
	}
	return out
}

// recordsText counts the records taken, in the window, and left out by a
// filter (--where, the ":" prompt).
func recordsText(s *model.Snapshot) string {
	t := count(s.Seen) + " taken, " + count(int64(s.Records)) + " in the window"
	if s.Input.Filtered > 0 {
		t += ", " + count(s.Input.Filtered) + " left out by the filter"
	}
	return t
}
