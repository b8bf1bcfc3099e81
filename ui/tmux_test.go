package ui

import (
	"bufio"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"bitsift/demo"
)

// tmuxTerm is a detached tmux session running one command at a fixed
// size: a real terminal for the end-to-end tests.
type tmuxTerm struct {
	t    *testing.T
	name string
}

func startTmux(t *testing.T, w, h int, command string) *tmuxTerm {
	t.Helper()
	if _, err := exec.LookPath("tmux"); err != nil {
		t.Skip("tmux is not installed (.ci/run installs it); the end-to-end screen test needs a real terminal")
	}
	name := "bitsift-test-" + strconv.Itoa(os.Getpid()) + "-" + strconv.FormatInt(time.Now().UnixNano()%1e6, 10)
	// The shell reports the exit code and the terminal's modes after the
	// program ends, then waits to be read.
	script := command + `; echo "EXIT=$?"; stty -a; sleep 60`
	cmd := exec.Command("tmux", "new-session", "-d", "-s", name, "-x", strconv.Itoa(w), "-y", strconv.Itoa(h), "sh", "-c", script)
	cmd.Env = append(os.Environ(), "TERM=xterm-256color")
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Skipf("tmux cannot start a session here (%v: %s)", err, out)
	}
	t.Cleanup(func() { exec.Command("tmux", "kill-session", "-t", name).Run() })
	return &tmuxTerm{t: t, name: name}
}

func (tt *tmuxTerm) capture() string {
	out, err := exec.Command("tmux", "capture-pane", "-p", "-t", tt.name).Output()
	if err != nil {
		tt.t.Fatalf("tmux capture-pane: %v", err)
	}
	return string(out)
}

// waitFor polls the pane until it shows every one of want.
func (tt *tmuxTerm) waitFor(want ...string) string {
	tt.t.Helper()
	deadline := time.Now().Add(45 * time.Second)
	var screen string
	for time.Now().Before(deadline) {
		screen = tt.capture()
		ok := true
		for _, w := range want {
			ok = ok && strings.Contains(screen, w)
		}
		if ok {
			return screen
		}
		time.Sleep(100 * time.Millisecond)
	}
	tt.t.Fatalf("the screen never showed %q; it shows:\n%s", want, screen)
	return ""
}

func (tt *tmuxTerm) keys(keys ...string) {
	tt.t.Helper()
	for _, k := range keys {
		if err := exec.Command("tmux", "send-keys", "-t", tt.name, k).Run(); err != nil {
			tt.t.Fatalf("tmux send-keys %s: %v", k, err)
		}
		time.Sleep(80 * time.Millisecond)
	}
}

// quit presses q and checks the exit code and that the terminal is back
// in its ordinary (cooked, echoing) mode.
func (tt *tmuxTerm) quit() {
	tt.t.Helper()
	tt.keys("q")
	screen := tt.waitFor("EXIT=", "speed")
	if !strings.Contains(screen, "EXIT=0") {
		tt.t.Errorf("q did not exit 0:\n%s", screen)
	}
	for _, mode := range []string{"icanon", "echo"} {
		if strings.Contains(screen, "-"+mode+" ") || !strings.Contains(screen, " "+mode) {
			tt.t.Errorf("terminal mode %s not restored after quitting:\n%s", mode, screen)
		}
	}
	if strings.Contains(screen, "[1 Fields]") || strings.Contains(screen, "rec/s") {
		tt.t.Errorf("the screen is still drawn after quitting:\n%s", screen)
	}
}

// buildBinary builds bitsift once per test run, into a folder TestMain
// removes: linking costs seconds of CPU, and every tmux test needs the same
// binary.
func buildBinary(t *testing.T) string {
	t.Helper()
	if _, err := exec.LookPath("tmux"); err != nil {
		t.Skip("tmux is not installed (.ci/run installs it); the end-to-end screen test needs a real terminal")
	}
	built.once.Do(func() {
		dir, err := os.MkdirTemp("", "bitsift-ui-test-")
		if err != nil {
			built.err = err
			return
		}
		built.dir = dir
		built.bin = filepath.Join(dir, "bitsift")
		cmd := exec.Command("go", "build", "-o", built.bin, ".")
		cmd.Dir = ".."
		if out, err := cmd.CombinedOutput(); err != nil {
			built.err = fmt.Errorf("go build: %v\n%s", err, out)
		}
	})
	if built.err != nil {
		t.Fatal(built.err)
	}
	return built.bin
}

// built is the binary buildBinary made, shared by the tests of one run.
var built struct {
	once     sync.Once
	dir, bin string
	err      error
}

func TestMain(m *testing.M) {
	code := m.Run()
	if built.dir != "" {
		os.RemoveAll(built.dir)
	}
	os.Exit(code)
}

func TestTmuxDemo(t *testing.T) {
	t.Parallel() // waits on the screen, mostly; the serial tmux tests time keys
	if testing.Short() {
		t.Skip("-short: the end-to-end screen test runs a binary for seconds")
	}
	bin := buildBinary(t)
	tt := startTmux(t, 80, 24, bin)
	tt.waitFor("[1 Fields]", "route", "rec/s", "live", "rejected 0")
	tt.keys("2")
	tt.waitFor("[2 Pairs]", "H(row|col)", "I(row;col)")
	tt.keys("Tab")
	tt.waitFor("[3 Focus", "TOP VALUES", "surprisal")
	tt.keys("?")
	tt.waitFor("MOVE", "SCREENS", "change window")
	tt.keys("Escape", "4")
	tt.waitFor("[4 Drift", "BASELINE", "rolling", "SURPRISING RECORDS")
	tt.keys("b")
	tt.waitFor("BASELINE  pinned at", "BROKEN RULES", "SHIFTED FIELDS")
	tt.keys("5")
	screen := tt.waitFor("[5 Plan]", "estimated: saves", "Caution: dropping fields")
	before := estimatedSaving(t, screen)
	// Rows: the constant, the derived fields, then the kept ones, largest
	// first: down to the first kept one (an identifier, 20-odd B/record).
	for range 12 {
		if cursorRow(screen, " keep ") {
			break
		}
		tt.keys("j")
		screen = tt.capture()
	}
	tt.keys("x")
	deadline := time.Now().Add(30 * time.Second)
	for {
		screen = tt.capture()
		if after := estimatedSaving(t, screen); after > before+10 {
			break
		}
		if time.Now().After(deadline) {
			t.Fatalf("pinning a kept field to drop did not raise the saving from %.1f B/record:\n%s", before, screen)
		}
		time.Sleep(100 * time.Millisecond)
	}
	if !strings.Contains(screen, "Caution: dropping fields") {
		t.Errorf("the plan screen lost its caution:\n%s", screen)
	}
	tt.keys("1", "w")
	tt.waitFor("window 5m") // the demo starts on 100k; w goes to the next
	tt.keys("Space")
	tt.waitFor("display paused")
	tt.quit()
}

// cursorRow says whether the row under the cursor (▸) holds want.
func cursorRow(screen, want string) bool {
	for _, l := range strings.Split(screen, "\n") {
		if strings.HasPrefix(l, "▸") {
			return strings.Contains(l, want)
		}
	}
	return false
}

var savingRE = regexp.MustCompile(`estimated: saves ([0-9.]+) of`)

// estimatedSaving reads the Plan screen's estimated saving, B/record.
func estimatedSaving(t *testing.T, screen string) float64 {
	t.Helper()
	m := savingRE.FindStringSubmatch(screen)
	if m == nil {
		t.Fatalf("no estimated saving on the plan screen:\n%s", screen)
	}
	v, err := strconv.ParseFloat(m[1], 64)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// demoFile writes n demo lines (seed 5) and one line that is not JSON.
func demoFile(t *testing.T, n int) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "quayside.jsonl")
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	w := bufio.NewWriter(f)
	g := demo.New(5, int64(n))
	var buf []byte
	for range n {
		buf = append(g.Append(buf[:0]), '\n')
		w.Write(buf)
	}
	w.WriteString("this line is not JSON\n")
	if err := w.Flush(); err != nil {
		t.Fatal(err)
	}
	f.Close()
	return path
}

func TestTmuxReplay(t *testing.T) {
	t.Parallel() // waits on the screen, mostly; the serial tmux tests time keys
	if testing.Short() {
		t.Skip("-short: the end-to-end screen test runs a binary for seconds")
	}
	bin := buildBinary(t)
	path := demoFile(t, 30_000)
	tt := startTmux(t, 120, 40, bin+" replay "+path)
	tt.waitFor("[1 Fields]", "zone", "host", "done", "30,001 lines", "rejected 1")
	tt.keys("Tab")
	tt.waitFor("[2 Pairs]")
	tt.keys("r")
	tt.waitFor("[6 Input]", "REJECTED  1 of 30,001 lines", "this line is not JSON")
	tt.quit()
}

var linesRE = regexp.MustCompile(`([0-9,]+) lines(?: |$)`)

// shownLines reads the line count on the status line.
func shownLines(t *testing.T, screen string) int {
	t.Helper()
	m := linesRE.FindStringSubmatch(screen)
	if m == nil {
		t.Fatalf("no line count on the status line:\n%s", screen)
	}
	n, _ := strconv.Atoi(strings.ReplaceAll(m[1], ",", ""))
	return n
}

// TestTmuxReplayPaced: a paced replay shows its progress with an ETA;
// space pauses the replay itself and n lets one window through.
func TestTmuxReplayPaced(t *testing.T) {
	t.Parallel() // waits on the screen, mostly; the serial tmux tests time keys
	if testing.Short() {
		t.Skip("-short: the end-to-end screen test runs a binary for seconds")
	}
	bin := buildBinary(t)
	path := demoFile(t, 60_000)
	tt := startTmux(t, 100, 30, bin+" replay --speed 1 --window 5000 "+path)
	tt.waitFor("● replaying", "ETA")
	tt.keys("Space")
	screen := tt.waitFor("● replay paused")
	time.Sleep(500 * time.Millisecond) // a frame after the pause
	screen = tt.capture()
	paused := shownLines(t, screen)
	time.Sleep(time.Second)
	if n := shownLines(t, tt.capture()); n != paused {
		t.Fatalf("the paused replay went on from %d to %d lines", paused, n)
	}
	tt.keys("n")
	deadline := time.Now().Add(30 * time.Second)
	for {
		screen = tt.capture()
		n := shownLines(t, screen)
		if n == paused+5000 && strings.Contains(screen, "● replay paused") {
			break
		}
		if time.Now().After(deadline) || n > paused+5000 {
			t.Fatalf("n let %d lines through, want one window of 5,000:\n%s", n-paused, screen)
		}
		time.Sleep(100 * time.Millisecond)
	}
	tt.keys("Space")
	tt.waitFor("● replaying")
	tt.quit()
}
