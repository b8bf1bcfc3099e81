package ui

import (
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"bitsift/internal/hostile"
)

// paneTitle is the title the program in the pane has given its terminal.
func (tt *tmuxTerm) paneTitle() string {
	tt.t.Helper()
	out, err := exec.Command("tmux", "display", "-p", "-t", tt.name, "#{pane_title}").Output()
	if err != nil {
		tt.t.Fatalf("tmux display: %v", err)
	}
	return strings.TrimSpace(string(out))
}

// TestTmuxHostile replays a stream of hostile lines (escape sequences that
// set the title, clear the screen and ring the bell, NUL bytes, invalid
// UTF-8, binary garbage, lines past --max-line) and visits every screen:
// the pane's title never changes, and the title text those lines carry
// appears only escaped, never as an effect.
func TestTmuxHostile(t *testing.T) {
	if testing.Short() {
		t.Skip("-short: the end-to-end screen test runs a binary for seconds")
	}
	bin := buildBinary(t)
	data, _ := hostile.Lines(20000, 4096)
	path := filepath.Join(t.TempDir(), "hostile.log")
	if err := os.WriteFile(path, data, 0o644); err != nil {
		t.Fatal(err)
	}
	tt := startTmux(t, 120, 40, bin+" replay --max-line 4096 "+path)
	tt.waitFor("[1 Fields]")
	title := tt.paneTitle()
	check := func(where string) {
		t.Helper()
		if got := tt.paneTitle(); got != title || strings.Contains(got, hostile.Title) {
			t.Fatalf("%s: the pane title changed from %q to %q", where, title, got)
		}
		screen := tt.capture()
		for i := strings.Index(screen, hostile.Title); i >= 0; {
			// Drawn escaped, the OSC that carries it shows as \x1b]0;
			// right before it.
			if !strings.HasSuffix(screen[:i], `\x1b]0;`) {
				t.Fatalf("%s: the hostile title text is on screen without its escape shown:\n%s", where, screen)
			}
			next := strings.Index(screen[i+1:], hostile.Title)
			if next < 0 {
				break
			}
			i += 1 + next
		}
		if strings.ContainsAny(screen, "\x1b\x07\x00") {
			t.Fatalf("%s: a raw control character reached the screen:\n%q", where, screen)
		}
	}
	tt.waitFor("done", "20,000 lines")
	check("Fields")
	for _, k := range []string{"2", "3", "4", "5", "6", "r", "e", "?"} {
		tt.keys(k)
		tt.waitFor("bitsift")
		check("after key " + k)
	}
	// The field that carries the title sequence, up close: its values
	// are on screen, escaped.
	// Escape first, and wait for the help to close: an Escape and a key
	// read together are one alt+key.
	tt.keys("Escape")
	tt.waitFor("REJECTED")
	tt.keys("1", "/", "title", "Enter", "Enter")
	screen := tt.waitFor("[3 Focus: title", "TOP VALUES")
	check("Focus on title")
	if !strings.Contains(screen, `\x1b]0;`+hostile.Title) {
		t.Errorf("the title field's value is not shown escaped:\n%s", screen)
	}
	tt.keys("Escape", "6", "G")
	screen = tt.waitFor("REJECTED")
	check("Input, scrolled")
	if !strings.Contains(screen, "rejected") {
		t.Errorf("the rejected count is not on screen:\n%s", screen)
	}
	tt.quit()
}
