package ui

import (
	"testing"

	tea "github.com/charmbracelet/bubbletea"

	"bitsift/ingest"
)

// fakePacer records what the screen asks of a replay.
type fakePacer struct {
	paused bool
	steps  []int
}

func (p *fakePacer) Pause()       { p.paused = true }
func (p *fakePacer) Resume()      { p.paused = false }
func (p *fakePacer) Step(n int)   { p.steps = append(p.steps, n); p.paused = true }
func (p *fakePacer) Paused() bool { return p.paused }

// TestReplayKeys: on a replay, space pauses the replay itself (the display
// goes on), n lets one window through; elsewhere space pauses the display.
func TestReplayKeys(t *testing.T) {
	t.Run("replay", func(t *testing.T) {
		m, feed := fixtureModel(t, 80, 24)
		p := &fakePacer{}
		feed.pacer = p
		m = press(t, m, "space")
		if !p.paused || m.paused {
			t.Errorf("after space: replay paused %v, display paused %v; want the replay paused, the display not", p.paused, m.paused)
		}
		m = press(t, m, "n")
		// The fixture's window is "all", which has no length: a step is
		// a steady 1,000 lines however many records it holds (issue 15:
		// steps of 1,000 then 1,664 read as uneven).
		if len(p.steps) != 1 || p.steps[0] != 1000 {
			t.Errorf("n stepped %v, want one step of 1,000", p.steps)
		}
		m = press(t, m, "space")
		if p.paused {
			t.Error("a second space did not resume the replay")
		}
	})
	t.Run("live", func(t *testing.T) {
		m, _ := fixtureModel(t, 80, 24)
		m = press(t, m, "space")
		if !m.paused {
			t.Error("space did not pause the display of a live source")
		}
		m = press(t, m, "n")
		if m.flash == "" {
			t.Error("n on a live source says nothing")
		}
	})
	t.Run("baseline keys", func(t *testing.T) {
		m, feed := fixtureModel(t, 80, 24)
		press(t, m, "b", "B")
		if len(feed.baselines) != 2 || feed.baselines[0] != ingest.PinWindow || feed.baselines[1] != ingest.Rolling {
			t.Errorf("baseline requests = %v, want pin then rolling", feed.baselines)
		}
	})
}

// TestOnceFramesOneAtATime: keys that ask for a frame outside the loop (the
// arrows over the Pairs cells) ask for one at a time. Keys pressed while
// one is on its way ask for nothing more until it comes; then one more
// frame is asked for, for the cell the cursor is on by then.
func TestOnceFramesOneAtATime(t *testing.T) {
	m, feed := fixtureModel(t, 120, 40)
	m = press(t, m, "2")
	update := func(msg tea.Msg) tea.Cmd {
		next, cmd := m.Update(msg)
		m = next.(Model)
		return cmd
	}
	first := update(tea.KeyMsg{Type: tea.KeyDown})
	if first == nil {
		t.Fatal("a move over the cells asks for no frame")
	}
	for range 5 {
		if cmd := update(tea.KeyMsg{Type: tea.KeyDown}); cmd != nil {
			t.Fatal("a move asks for a frame while one is on its way")
		}
	}
	want := m.pairs.selR
	again := update(first())
	if again == nil {
		t.Fatal("no frame asked for the moves made while one was on its way")
	}
	msg, ok := again().(frameMsg)
	if !ok || !msg.once {
		t.Fatalf("asked again: %T, want a frame outside the loop", msg)
	}
	if feed.asked[0].Detail == want {
		t.Fatalf("the moves stayed on the row of %q", want)
	}
	if got := feed.asked[len(feed.asked)-1].Detail; got != want {
		t.Errorf("asked again for the breakdown of %q, want the cell now under the cursor (%q)", got, want)
	}
	if cmd := update(msg); cmd != nil {
		t.Error("a frame answered with no move since asks for another")
	}
	if len(feed.asked) != 2 {
		t.Errorf("%d frames asked for, want 2", len(feed.asked))
	}
}
