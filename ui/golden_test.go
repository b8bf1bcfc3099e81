package ui

import (
	"flag"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/x/ansi"
)

// updating says whether -update was given. teatest's golden package
// already defines the flag; this file shares it rather than clash.
func updating() bool {
	f := flag.Lookup("update")
	if f == nil {
		return false
	}
	v, _ := f.Value.(flag.Getter).Get().(bool)
	return v
}

// press sends keys to a model, as typed.
func press(t testing.TB, m Model, keys ...string) Model {
	t.Helper()
	for _, k := range keys {
		var msg tea.KeyMsg
		switch k {
		case "enter":
			msg = tea.KeyMsg{Type: tea.KeyEnter}
		case "esc":
			msg = tea.KeyMsg{Type: tea.KeyEsc}
		case "tab":
			msg = tea.KeyMsg{Type: tea.KeyTab}
		case "down":
			msg = tea.KeyMsg{Type: tea.KeyDown}
		case "space":
			msg = tea.KeyMsg{Type: tea.KeySpace, Runes: []rune{' '}}
		default:
			msg = tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune(k)}
		}
		next, cmd := m.Update(msg)
		m = next.(Model)
		// Run what a key asks for at once (opening a field), as the
		// program would; frames come from the static feed.
		for cmd != nil {
			msg := cmd()
			if _, ok := msg.(tea.QuitMsg); ok || msg == nil {
				break
			}
			next, cmd = m.Update(msg)
			m = next.(Model)
			if _, isFrame := msg.(frameMsg); isFrame {
				break
			}
		}
	}
	return m
}

func TestGolden(t *testing.T) {
	screens := []struct {
		name   string
		keys   []string
		sample bool // the feed has raw lines, so the plan is measured
	}{
		{"fields", nil, false},
		{"fields-sorted-filtered", []string{"s", "S", "/", "o", "u", "enter"}, false},
		{"pairs", []string{"2", "down", "down", "down", "down", "down", "l", "l"}, false},
		{"focus", []string{"2", "down", "down", "l", "l", "l", "l", "l", "3"}, false},
		{"focus-best", []string{"/", "upstream", "enter", "enter"}, false},
		{"drift", []string{"4"}, false},
		{"drift-surprising", []string{"4", "G"}, false},
		{"plan", []string{"5"}, false},
		{"plan-pinned", []string{"5", "down", "down", "+", "down", "x"}, false},
		{"plan-measured", []string{"5"}, true},
		{"input", []string{"6"}, false},
		{"help", []string{"?"}, false},
		{"paused", []string{"space"}, false},
	}
	for _, size := range [][2]int{{80, 24}, {120, 40}} {
		for _, sc := range screens {
			name := sc.name + "-" + strconv.Itoa(size[0]) + "x" + strconv.Itoa(size[1])
			t.Run(name, func(t *testing.T) {
				m, feed := fixtureModel(t, size[0], size[1])
				if sc.sample {
					feed.sample = fixtureSample()
				}
				m = press(t, m, sc.keys...)
				got := ansi.Strip(m.View())
				checkSize(t, got, size[0], size[1])
				path := filepath.Join("testdata", name+".golden")
				if updating() {
					if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
						t.Fatal(err)
					}
					return
				}
				want, err := os.ReadFile(path)
				if err != nil {
					t.Fatalf("%v (run go test ./ui/ -update to write it)", err)
				}
				if got != string(want) {
					t.Errorf("screen differs from %s (go test ./ui/ -update rewrites it):\n%s", path, got)
				}
			})
		}
	}
}

// checkSize fails when a view is not exactly h lines of at most w cells.
func checkSize(t *testing.T, view string, w, h int) {
	t.Helper()
	lines := strings.Split(view, "\n")
	if len(lines) != h {
		t.Errorf("view has %d lines, want %d", len(lines), h)
	}
	for i, l := range lines {
		if n := ansi.StringWidth(l); n > w {
			t.Errorf("line %d is %d cells wide, more than %d: %q", i+1, n, w, l)
		}
	}
}
