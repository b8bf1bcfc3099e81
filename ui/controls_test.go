package ui

import (
	"testing"

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
