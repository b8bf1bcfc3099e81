package ui

import (
	"bytes"
	"testing"
	"time"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/x/exp/teatest"

	"bitsift/ingest"
	"bitsift/plan"
)

// TestFlow drives the screen as a program: start, switch screens, pin a
// baseline, pin a field in the plan and see the saving change, open a
// field, pause, quit.
func TestFlow(t *testing.T) {
	m, feed := fixtureModel(t, 80, 24)
	tm := teatest.NewTestModel(t, m, teatest.WithInitialTermSize(80, 24))
	wait := func(what string) {
		t.Helper()
		teatest.WaitFor(t, tm.Output(), func(b []byte) bool { return bytes.Contains(b, []byte(what)) },
			teatest.WithDuration(10*time.Second), teatest.WithCheckInterval(20*time.Millisecond))
	}
	key := func(s string) {
		switch s {
		case "tab":
			tm.Send(tea.KeyMsg{Type: tea.KeyTab})
		case "enter":
			tm.Send(tea.KeyMsg{Type: tea.KeyEnter})
		case "space":
			tm.Send(tea.KeyMsg{Type: tea.KeySpace, Runes: []rune{' '}})
		default:
			tm.Send(tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune(s)})
		}
	}
	wait("refund_reason")
	key("tab")
	wait("cell: 1 − RFI(row|col)")
	key("6")
	wait("REJECTED")
	key("4")
	wait("BROKEN RULES")
	key("b")
	wait("BASELINE  pinned at")
	key("5")
	wait("estimated: saves 55.5 of 192.8")
	for range 5 {
		key("j") // to ts, which the plan keeps
	}
	key("x")
	wait("estimated: saves 84.5 of 192.8")
	key("1")
	wait("[1 Fields]")
	for range 7 {
		key("j")
	}
	key("enter") // the eighth field by entropy: upstream
	wait("upstream given route")
	key("space")
	wait("display paused")
	key("q")
	tm.WaitFinished(t, teatest.WithFinalTimeout(5*time.Second))
	final := tm.FinalModel(t).(Model)
	if final.screen != screenFocus || final.focus.field != "upstream" || !final.paused {
		t.Errorf("final state: screen %d, field %q, paused %v; want Focus on upstream, paused",
			final.screen, final.focus.field, final.paused)
	}
	if p := final.planner.pins["ts"]; p != plan.PinDrop || len(final.planner.pins) != 1 {
		t.Errorf("plan pins = %v, want ts pinned to drop", final.planner.pins)
	}
	feed.mu.Lock()
	defer feed.mu.Unlock()
	if len(feed.baselines) != 1 || feed.baselines[0] != ingest.PinWindow {
		t.Errorf("baseline requests = %v, want one pin", feed.baselines)
	}
}
