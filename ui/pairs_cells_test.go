package ui

import (
	"strings"
	"testing"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/x/ansi"
)

// TestPairsCellOpensLines: enter on a heat-map cell opens the lines behind
// the value pair under the breakdown's cursor (row field = its value,
// column field = its value); ] moves to the next pair; 3 still brings the
// cell up close. The fixture's frame carries upstream given route
// (package demo: each route has one upstream before the incident).
func TestPairsCellOpensLines(t *testing.T) {
	m, _ := fixtureModel(t, 80, 24)
	m = press(t, m, "2", "down", "down", "down", "down", "down", "l", "l")
	if m.pairs.selR != "upstream" || m.pairs.selC != "route" {
		t.Fatalf("cursor on %s × %s, want upstream × route", m.pairs.selR, m.pairs.selC)
	}
	ps := m.pairs.cellPairs(m.e.frame.Snap)
	if len(ps) < 2 {
		t.Fatalf("the cell breaks down into %d value pairs", len(ps))
	}
	for _, pick := range []int{0, 1} {
		if pick == 1 {
			m = press(t, m, "]")
		}
		_, cmd := m.pairs.Update(tea.KeyMsg{Type: tea.KeyEnter})
		if cmd == nil {
			t.Fatal("enter on the cell does nothing")
		}
		msg, ok := cmd().(openLinesMsg)
		if !ok {
			t.Fatalf("enter on the cell sends %T, not the lines behind it", cmd())
		}
		want := ps[pick]
		if len(msg.conds) != 2 || msg.conds[0].Field != "upstream" || msg.conds[0].Value != want.row.Value ||
			msg.conds[1].Field != "route" || msg.conds[1].Value != want.col.Value {
			t.Errorf("pick %d opens %+v, want upstream=%s route=%s", pick, msg.conds, want.row.Value, want.col.Value)
		}
	}
	m = press(t, m, "3")
	if m.screen != screenFocus || m.focus.field != "upstream" || m.focus.given != "route" {
		t.Errorf("3 on the cell shows screen %d, %s given %s", m.screen, m.focus.field, m.focus.given)
	}
}

// TestHelpListsPairKeys: at 80×24 the help overlay lists the keys of the
// Pairs breakdown whole, inside the screen.
func TestHelpListsPairKeys(t *testing.T) {
	m, _ := fixtureModel(t, 80, 24)
	m = press(t, m, "?")
	got := ansi.Strip(m.View())
	checkSize(t, got, 80, 24)
	for _, want := range []string{"[ ]   given · value pair", "enter     open field · lines", "3         one field · cell"} {
		if !strings.Contains(got, want) {
			t.Errorf("help at 80×24 lacks %q:\n%s", want, got)
		}
	}
}
