package cli

import (
	"bytes"
	"context"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"
)

// runCtx is run with a context of the test's making.
func runCtx(ctx context.Context, stdin string, args ...string) (int, string, string) {
	var out, errb bytes.Buffer
	code := Run(ctx, args, IO{In: strings.NewReader(stdin), Out: &out, Err: &errb})
	return code, out.String(), errb.String()
}

// TestInterruptedReportAndPlanExitNonZero: a report or plan interrupted by
// SIGINT or SIGTERM (here: its context cancelled with that cause while it
// waits on a FIFO with no writer) exits 130 or 143, says so on stderr,
// writes nothing to stdout and leaves no --out file.
func TestInterruptedReportAndPlanExitNonZero(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "berths.fifo")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Skipf("no FIFOs here: %v", err)
	}
	out := filepath.Join(dir, "drop.jq")
	for _, c := range []struct {
		sig  syscall.Signal
		args []string
		code int
	}{
		{syscall.SIGINT, []string{"report", "-o", "json", fifo}, 130},
		{syscall.SIGTERM, []string{"report", fifo}, 143},
		{syscall.SIGINT, []string{"plan", "--emit", "jq", "--out", out, fifo}, 130},
		{syscall.SIGTERM, []string{"plan", "-o", "json", fifo}, 143},
	} {
		ctx, cancel := context.WithCancelCause(context.Background())
		time.AfterFunc(200*time.Millisecond, func() { cancel(Interrupted{Signal: c.sig}) })
		done := make(chan struct{})
		var code int
		var stdout, stderr string
		go func() {
			code, stdout, stderr = runCtx(ctx, "", c.args...)
			close(done)
		}()
		select {
		case <-done:
		case <-time.After(20 * time.Second):
			t.Fatalf("%v: did not stop when interrupted", c.args)
		}
		if code != c.code || stdout != "" || !strings.Contains(stderr, "interrupted by") || !strings.Contains(stderr, "nothing was written") {
			t.Errorf("%v %v: exit %d (want %d), stdout %q, stderr %q", c.sig, c.args, code, c.code, stdout, stderr)
		}
		if _, err := os.Stat(out); err == nil {
			t.Errorf("%v: an --out file was left behind", c.args)
		}
	}
}

var (
	binOnce sync.Once
	binPath string
	binErr  error
)

// binary builds bitsift once for the tests that send it real signals.
func binary(t *testing.T) string {
	t.Helper()
	if testing.Short() {
		t.Skip("-short: builds the binary")
	}
	binOnce.Do(func() {
		dir, err := os.MkdirTemp("", "bitsift-bin")
		if err != nil {
			binErr = err
			return
		}
		binPath = filepath.Join(dir, "bitsift")
		cmd := exec.Command("go", "build", "-o", binPath, ".")
		cmd.Dir = ".."
		if out, err := cmd.CombinedOutput(); err != nil {
			binErr = err
			t.Logf("%s", out)
		}
	})
	if binErr != nil {
		t.Fatalf("go build: %v", binErr)
	}
	return binPath
}

// TestNeverHangOnFIFOOrEndlessLine: a FIFO with no writer (which blocks in
// open) and /dev/zero (one endless line) stop within a second of SIGINT or
// SIGTERM, with the signal's exit code and no output.
func TestNeverHangOnFIFOOrEndlessLine(t *testing.T) {
	bin := binary(t)
	fifo := filepath.Join(t.TempDir(), "quay.fifo")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Skipf("no FIFOs here: %v", err)
	}
	for _, args := range [][]string{{"report", fifo}, {"report", "/dev/zero"}, {"plan", "/dev/zero"}} {
		for _, sig := range []syscall.Signal{syscall.SIGINT, syscall.SIGTERM} {
			cmd := exec.Command(bin, args...)
			var stdout, stderr bytes.Buffer
			cmd.Stdout, cmd.Stderr = &stdout, &stderr
			if err := cmd.Start(); err != nil {
				t.Fatal(err)
			}
			waitOpening(t, cmd.Process.Pid, args[len(args)-1])
			time.Sleep(100 * time.Millisecond) // blocked in open, or reading the endless line
			t0 := time.Now()
			cmd.Process.Signal(sig)
			done := make(chan error, 1)
			go func() { done <- cmd.Wait() }()
			select {
			case <-done:
			case <-time.After(10 * time.Second):
				cmd.Process.Kill()
				t.Fatalf("%v: still running 10 s after %v", args, sig)
			}
			took := time.Since(t0)
			if code := cmd.ProcessState.ExitCode(); code != 128+int(sig) || stdout.Len() > 0 || !strings.Contains(stderr.String(), "interrupted") {
				t.Errorf("%v %v: exit %d, stdout %d bytes, stderr %q", args, sig, code, stdout.Len(), stderr.String())
			}
			t.Logf("%v %v: stopped %v after the signal", args, sig, took)
			if took > 3*time.Second { // a second on an idle machine; generous under load
				t.Errorf("%v %v: took %v to stop", args, sig, took)
			}
		}
	}
}

// TestAllRejectedExitsNonZero: a run where every line is rejected (binary
// data; a forced wrong --format) or that reads no line exits 2 and names
// the cause and the way out.
func TestAllRejectedExitsNonZero(t *testing.T) {
	bin := make([]byte, 4096)
	for i := range bin {
		bin[i] = byte(i*7919>>3) | 0x80
	}
	logfmt := write(t, "tide.log", []byte("berth=4 tide=high\nberth=5 tide=low\n"))
	for _, c := range []struct {
		args []string
		want []string
	}{
		{[]string{"report", write(t, "blob.bin", bin)}, []string{"no line could be read", "--format", "--pattern"}},
		{[]string{"report", "-o", "json", "--format", "json", logfmt}, []string{"no line could be read", "not a JSON object", "--format"}},
		{[]string{"plan", "--format", "json", logfmt}, []string{"no line could be read", "--format"}},
		{[]string{"report", write(t, "empty.log", nil)}, []string{"the input was empty"}},
	} {
		code, _, errs := run(t, "", c.args...)
		if code != ExitNoRecords {
			t.Errorf("%v: exit %d, want %d", c.args, code, ExitNoRecords)
		}
		for _, w := range c.want {
			if !strings.Contains(errs, w) {
				t.Errorf("%v: stderr %q does not say %q", c.args, errs, w)
			}
		}
	}
}

type failWriter struct{}

func (failWriter) Write([]byte) (int, error) { return 0, syscall.ENOSPC }

// TestOutputWriteFailureHasItsOwnCode: a full disk on stdout, or an --out
// file that cannot be made, exits 4, not the usage or input codes.
func TestOutputWriteFailureHasItsOwnCode(t *testing.T) {
	p := write(t, "demo.jsonl", demoLines(500))
	var errb bytes.Buffer
	if code := Run(context.Background(), []string{"report", p}, IO{In: strings.NewReader(""), Out: failWriter{}, Err: &errb}); code != ExitWrite {
		t.Errorf("stdout full: exit %d, want %d (%s)", code, ExitWrite, errb.String())
	}
	code, _, errs := run(t, "", "plan", "--out", filepath.Join(t.TempDir(), "no-such-dir", "drop.jq"), "--emit", "jq", p)
	if code != ExitWrite {
		t.Errorf("--out in a missing folder: exit %d, want %d (%s)", code, ExitWrite, errs)
	}
}

// TestNaNFlagsRefused: NaN and infinities are not numbers a flag can mean.
func TestNaNFlagsRefused(t *testing.T) {
	p := write(t, "demo.jsonl", demoLines(100))
	for _, args := range [][]string{
		{"plan", "--max-loss", "NaN", p}, {"plan", "--max-loss", "+Inf", p},
		{"replay", "--speed", "NaN", p}, {"replay", "--speed", "inf", p},
		{"demo", "--rate", "NaN"}, {"demo", "--rate", "-1"},
	} {
		if code, _, errs := run(t, "", args...); code != ExitUsage {
			t.Errorf("%v: exit %d, want %d (%s)", args, code, ExitUsage, errs)
		}
	}
}

// TestJSONFieldsNeverNull: a report with no records lists no fields as [],
// never null.
func TestJSONFieldsNeverNull(t *testing.T) {
	_, out, _ := run(t, "", "report", "-o", "json", write(t, "empty.log", nil))
	if strings.Contains(out, "null") || !strings.Contains(out, `"fields": []`) {
		t.Errorf("JSON with a null list:\n%s", out)
	}
}

// waitOpening waits until the process opens path (Linux: its links in
// /proc/PID/fd; opening an input comes after the signal handlers are set),
// so that the signal tests the program's handling, not a process still
// starting up. A FIFO with no writer is not open until one comes, so for
// it the process's own folder is watched for the thread stuck in open.
func waitOpening(t *testing.T, pid int, path string) {
	t.Helper()
	deadline := time.Now().Add(20 * time.Second)
	fi, _ := os.Stat(path)
	fifo := fi != nil && fi.Mode()&os.ModeNamedPipe != 0
	for time.Now().Before(deadline) {
		dir := filepath.Join("/proc", strconv.Itoa(pid))
		if _, err := os.Stat(dir); err != nil {
			time.Sleep(time.Second) // no /proc: give it time
			return
		}
		if fifo {
			// The main thread's syscall: openat (257 on amd64, 56 on
			// arm64) while it waits for a writer.
			if b, err := os.ReadFile(filepath.Join(dir, "syscall")); err == nil {
				if f := strings.Fields(string(b)); len(f) > 0 && (f[0] == "257" || f[0] == "56") {
					return
				}
			}
			// Another thread may be the one in open.
			tasks, _ := os.ReadDir(filepath.Join(dir, "task"))
			for _, task := range tasks {
				b, err := os.ReadFile(filepath.Join(dir, "task", task.Name(), "syscall"))
				if f := strings.Fields(string(b)); err == nil && len(f) > 0 && (f[0] == "257" || f[0] == "56") {
					return
				}
			}
		}
		links, _ := os.ReadDir(filepath.Join(dir, "fd"))
		for _, l := range links {
			if target, err := os.Readlink(filepath.Join(dir, "fd", l.Name())); err == nil && target == path {
				return
			}
		}
		time.Sleep(5 * time.Millisecond)
	}
	t.Fatalf("process %d never opened %s", pid, path)
}
