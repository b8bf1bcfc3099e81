package ui

import (
	"time"

	"github.com/charmbracelet/bubbles/key"
	"github.com/charmbracelet/bubbles/viewport"
	tea "github.com/charmbracelet/bubbletea"

	"bitsift/ingest"
	"bitsift/model"
)

// env is what every view shares: styles, keys, and the frame on show.
type env struct {
	st    Styles
	keys  KeyMap
	frame *ingest.Frame // nil until the first frame
	// deep is the last frame with a deep snapshot (surprising records),
	// nil until one came.
	deep *ingest.Frame
	hist *history
	// timeline keeps what changed, frame after frame, after it left
	// the window.
	timeline *model.TimelineBook
	now      func() time.Time
	// pinnedAt is when the user last pinned a baseline (zero: never).
	pinnedAt time.Time
	// baselineChecked: --baseline has been checked against the stream.
	baselineChecked bool
}

// openMsg asks the root to show one field up close, given another field
// ("" for its best predictor).
type openMsg struct{ field, given string }

func open(field, given string) tea.Cmd {
	return func() tea.Msg { return openMsg{field, given} }
}

// scroll is the movement a key or the mouse wheel asks of a list or page:
// lines down (negative: up), or to an end.
type scroll struct {
	by          int
	top, bottom bool
	wheel       bool // from the mouse wheel: one notch is by
}

// wheelLines is how far one notch of the wheel scrolls a page.
const wheelLines = 3

// lines is the movement for a page of text: a wheel notch moves a few
// lines.
func (s scroll) lines() scroll {
	if s.wheel {
		s.by *= wheelLines
	}
	return s
}

// scrollViewport moves a viewport by s, in lines.
func scrollViewport(vp *viewport.Model, s scroll) {
	s = s.lines()
	switch {
	case s.top:
		vp.GotoTop()
	case s.bottom:
		vp.GotoBottom()
	case s.by < 0:
		vp.ScrollUp(-s.by)
	default:
		vp.ScrollDown(s.by)
	}
}

// scrollOf reads a movement from a message; ok is false for anything
// else. page is the height of a page.
func scrollOf(k KeyMap, msg tea.Msg, page int) (s scroll, ok bool) {
	switch msg := msg.(type) {
	case tea.KeyMsg:
		switch {
		case key.Matches(msg, k.Up):
			return scroll{by: -1}, true
		case key.Matches(msg, k.Down):
			return scroll{by: 1}, true
		case key.Matches(msg, k.PageUp):
			return scroll{by: -max(1, page-1)}, true
		case key.Matches(msg, k.PageDown):
			return scroll{by: max(1, page-1)}, true
		case key.Matches(msg, k.Top):
			return scroll{top: true}, true
		case key.Matches(msg, k.Bottom):
			return scroll{bottom: true}, true
		}
	case tea.MouseMsg:
		if msg.Action != tea.MouseActionPress {
			return scroll{}, false
		}
		switch msg.Button {
		case tea.MouseButtonWheelUp:
			return scroll{by: -1, wheel: true}, true
		case tea.MouseButtonWheelDown:
			return scroll{by: 1, wheel: true}, true
		}
	}
	return scroll{}, false
}

// apply moves a cursor in [0, n).
func (s scroll) apply(cur, n int) int {
	switch {
	case n == 0:
		return 0
	case s.top:
		return 0
	case s.bottom:
		return n - 1
	}
	return max(0, min(n-1, cur+s.by))
}

// keepInView clamps a list cursor to n rows and moves the first row shown
// (offset) so that the cursor stays within a page of h rows.
func keepInView(cursor, offset, n, h int) (int, int) {
	cursor = max(0, min(cursor, n-1))
	if cursor < offset {
		offset = cursor
	}
	if cursor >= offset+h {
		offset = cursor - h + 1
	}
	return cursor, max(0, min(offset, n-h))
}
