package ui

import (
	"bufio"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// wideFile writes lines of 1,024 small fields each: a deep analysis of it
// takes a minute or more, far longer than anyone waits for q.
func wideFile(t *testing.T, lines, fields int) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "manifest-wide.jsonl")
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	w := bufio.NewWriter(f)
	r := rand.New(rand.NewPCG(7, 11))
	for i := 0; i < lines; i++ {
		w.WriteByte('{')
		for k := 0; k < fields; k++ {
			if k > 0 {
				w.WriteByte(',')
			}
			fmt.Fprintf(w, `"hold%d":%d`, k, r.IntN(2+k%13))
		}
		w.WriteString("}\n")
	}
	if err := w.Flush(); err != nil {
		t.Fatal(err)
	}
	f.Close()
	return path
}

// TestTmuxQuitDuringDeepAnalysis: q on a 1,024-field stream with the Drift
// screen open (which asks for a deep analysis at once) exits at once: the
// analysis gives up when the screen closes, and quitting does not wait
// for it. Before, q waited for it to finish (57 s here on a loaded
// machine). The time from the key to the shell's next command is logged;
// the check is generous (a second) so that it holds on a loaded machine,
// and still tells a wait for the analysis from none.
func TestTmuxQuitDuringDeepAnalysis(t *testing.T) {
	if testing.Short() {
		t.Skip("-short: the end-to-end screen test runs a binary for seconds")
	}
	bin := buildBinary(t)
	path := wideFile(t, 2000, 1024)
	marker := filepath.Join(t.TempDir(), "exited")
	// ": >" is a shell builtin: the marker appears without a fork.
	tt := startTmux(t, 120, 40, fmt.Sprintf("%s watch --from-start %s; s=$?; : > %s; (exit $s)", bin, path, marker))
	tt.waitFor("[1 Fields]", "1,024 of 1,024 fields", "2,000 lines")
	tt.keys("4")
	tt.waitFor("[4 Drift", "SURPRISING RECORDS")
	time.Sleep(300 * time.Millisecond) // the deep frame is under way (it takes a minute)
	t0 := time.Now()
	tt.keys("q")
	var took time.Duration
	for {
		if _, err := os.Stat(marker); err == nil {
			took = time.Since(t0)
			break
		}
		if time.Since(t0) > 30*time.Second {
			t.Fatalf("q did not exit within 30 s:\n%s", tt.capture())
		}
		time.Sleep(2 * time.Millisecond)
	}
	t.Logf("q to exit: %v (includes tmux delivering the key and the 80 ms pause after it)", took)
	screen := tt.waitFor("EXIT=")
	if !strings.Contains(screen, "EXIT=0") {
		t.Errorf("q did not exit 0:\n%s", screen)
	}
	if took > time.Second {
		t.Errorf("q took %v to exit, want well under a second (200 ms on an idle machine)", took)
	}
}
