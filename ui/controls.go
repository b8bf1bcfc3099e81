package ui

// The controls of the stream under the screen: pause, step and the window.

import (
	tea "github.com/charmbracelet/bubbletea"

	"bitsift/ingest"
	"bitsift/model"
)

// pause pauses a replay itself (the display goes on showing it paused),
// or else the display (ingest goes on).
func (m Model) pause() (tea.Model, tea.Cmd) {
	if p := m.feed.Pacer(); p != nil {
		if p.Paused() {
			p.Resume()
			m.say("replay resumed")
		} else {
			p.Pause()
			m.say("replay paused: n lets one window through, space resumes")
		}
		return m.fetchOnce()
	}
	m.paused = !m.paused
	m.gen++
	if !m.paused {
		return m, m.fetch(false)
	}
	return m, nil
}

// step lets one window of records through a paused replay.
func (m Model) step() (tea.Model, tea.Cmd) {
	p := m.feed.Pacer()
	if p == nil {
		m.say("n steps a replay; this source is not one")
		return m, nil
	}
	n := stepRecords(m.e.frame)
	p.Step(n)
	m.say("replay: " + count(int64(n)) + " lines on, then paused (space resumes)")
	return m.fetchOnce()
}

// stepRecords is one window of lines: the window's length for a record
// window, else a steady 1,000 (a window "all" or of a duration has no
// length in records, and a step that grew with the window would read as
// uneven).
func stepRecords(f *ingest.Frame) int {
	if f != nil {
		if w := f.Snap.Window; w.Kind == model.WindowRecords {
			return w.Records
		}
	}
	return 1000
}

// nextWindow asks for the next window in the cycle.
func (m Model) nextWindow() (tea.Model, tea.Cmd) {
	cur := model.Window{Kind: model.WindowAll}
	if m.pendingWindow != nil {
		cur = *m.pendingWindow
	} else if m.e.frame != nil {
		cur = m.e.frame.Snap.Window
	}
	next := m.opt.Windows[0]
	for i, w := range m.opt.Windows {
		if w == cur {
			next = m.opt.Windows[(i+1)%len(m.opt.Windows)]
		}
	}
	m.feed.SetWindow(next)
	m.pendingWindow = &next
	if f := m.e.frame; f != nil && windowGrows(cur, next) {
		// A larger window starts from the records the window holds:
		// those that already left it are gone, and the screen says so.
		left := f.Source.Lines - int64(f.Snap.Records) - f.Snap.Input.Rejected
		if left > 0 {
			m.say("window " + windowName(next) + ": starts from the " + count(int64(f.Snap.Records)) +
				" records held; " + count(left) + " earlier ones already left and are not counted")
		}
	}
	if m.paused {
		return m, nil
	}
	return m.fetchOnce()
}

// windowGrows says whether next may hold more records than cur: the
// records cur let go cannot come back.
func windowGrows(cur, next model.Window) bool {
	switch {
	case next.Kind == model.WindowAll:
		return cur.Kind != model.WindowAll
	case cur.Kind == model.WindowRecords && next.Kind == model.WindowRecords:
		return next.Records > cur.Records
	}
	return cur.Kind != next.Kind
}
