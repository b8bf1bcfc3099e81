package ui

import (
	"bufio"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
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

// paneModes reads the pane's alternate-screen, mouse and cursor flags.
func paneModes(t *testing.T, name string) string {
	t.Helper()
	out, err := exec.Command("tmux", "display", "-p", "-t", name, "alt=#{alternate_on} mouse=#{mouse_any_flag}#{mouse_button_flag}#{mouse_standard_flag} cursor=#{cursor_flag}").Output()
	if err != nil {
		t.Fatalf("tmux display: %v", err)
	}
	return strings.TrimSpace(string(out))
}

// TestTmuxSuspendResumeHangupQuit: in an interactive shell, ctrl+z on the
// screen gives the terminal back (no alternate screen, no mouse reporting,
// cursor shown) and the shell lists a stopped job; fg brings the screen
// back; SIGQUIT and SIGHUP close it with the terminal restored and exit
// 131 and 129.
func TestTmuxSuspendResumeHangupQuit(t *testing.T) {
	if testing.Short() {
		t.Skip("-short: the end-to-end screen test runs a binary for seconds")
	}
	bin := buildBinary(t)
	if _, err := exec.LookPath("bash"); err != nil {
		t.Skip("bash is not installed: the job-control test needs an interactive shell")
	}
	for _, c := range []struct {
		sig  string
		code string
	}{{"QUIT", "131"}, {"HUP", "129"}} {
		name := fmt.Sprintf("bitsift-susp-%d-%d", os.Getpid(), time.Now().UnixNano()%1e6)
		cmd := exec.Command("tmux", "new-session", "-d", "-s", name, "-x", "100", "-y", "30", "bash", "--norc", "--noprofile", "-i")
		cmd.Env = append(os.Environ(), "TERM=xterm-256color")
		if out, err := cmd.CombinedOutput(); err != nil {
			t.Skipf("tmux cannot start a session here (%v: %s)", err, out)
		}
		t.Cleanup(func() { exec.Command("tmux", "kill-session", "-t", name).Run() })
		tt := &tmuxTerm{t: t, name: name}
		time.Sleep(200 * time.Millisecond) // the shell starts; what is typed meanwhile waits for it
		tt.keys("PS1='ready$ '", "Enter")
		tt.waitFor("ready$")
		tt.keys(bin+" & echo PID=$!; fg", "Enter")
		tt.waitFor("[1 Fields]", "rec/s")
		if m := paneModes(t, name); m != "alt=1 mouse=011 cursor=0" {
			t.Logf("modes on the screen: %s", m)
		}
		tt.keys("C-z")
		tt.waitFor("Stopped")
		if m := paneModes(t, name); !strings.HasPrefix(m, "alt=0 mouse=000 cursor=1") {
			t.Errorf("after ctrl+z the terminal is not restored: %s", m)
		}
		// $((40+2)) keeps the answers out of the command line itself.
		tt.keys(`stty -a | grep -q -e ' -icanon' -e ' -echo ' && echo RAW-$((40+2)) || echo COOKED-$((40+2))`, "Enter")
		if screen := tt.waitFor("-42"); !strings.Contains(screen, "COOKED-42") {
			t.Errorf("after ctrl+z the terminal is still raw:\n%s", screen)
		}
		tt.keys("fg", "Enter")
		deadline := time.Now().Add(30 * time.Second)
		for !strings.HasPrefix(paneModes(t, name), "alt=1") {
			if time.Now().After(deadline) {
				t.Fatalf("fg did not bring the screen back:\n%s", tt.capture())
			}
			time.Sleep(50 * time.Millisecond)
		}
		tt.waitFor("[1 Fields]", "rec/s")
		pid := ""
		for _, l := range strings.Split(tt.captureAll(), "\n") {
			if v, ok := strings.CutPrefix(strings.TrimSpace(l), "PID="); ok {
				pid = v
			}
		}
		if pid == "" {
			t.Fatal("no PID shown")
		}
		if out, err := exec.Command("kill", "-"+c.sig, pid).CombinedOutput(); err != nil {
			t.Fatalf("kill -%s %s: %v %s", c.sig, pid, err, out)
		}
		tt.waitFor("ready$")
		tt.keys("echo EXIT=$?", "Enter")
		screen := tt.waitFor("EXIT=")
		if !strings.Contains(screen, "EXIT="+c.code) {
			t.Errorf("SIG%s: want exit %s:\n%s", c.sig, c.code, screen)
		}
		if m := paneModes(t, name); !strings.HasPrefix(m, "alt=0 mouse=000 cursor=1") {
			t.Errorf("after SIG%s the terminal is not restored: %s", c.sig, m)
		}
	}
}

// captureAll is the pane with its history (what scrolled off and what the
// alternate screen hides).
func (tt *tmuxTerm) captureAll() string {
	out, err := exec.Command("tmux", "capture-pane", "-p", "-a", "-S", "-200", "-t", tt.name).Output()
	if err != nil {
		out, _ = exec.Command("tmux", "capture-pane", "-p", "-S", "-200", "-t", tt.name).Output()
	}
	return string(out)
}
