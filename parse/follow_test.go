package parse

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"
)

// The follow tests run a writer goroutine that numbers its lines and a
// reader that collects what the Follower returns; each checks that every
// number written is read exactly once. Short graces keep them quick; the
// writer's pauses are far shorter than the grace, as a logging process's
// are.

const testGrace = 300 * time.Millisecond

// numberWriter appends numbered lines to a file.
type numberWriter struct {
	t *testing.T
	f *os.File
	n int
}

func openWriter(t *testing.T, path string) *numberWriter {
	w := &numberWriter{t: t}
	w.reopen(path)
	return w
}

// reopen starts writing to path (created if missing), as a writer does on
// its reopen signal.
func (w *numberWriter) reopen(path string) {
	if w.f != nil {
		w.f.Close()
	}
	f, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_APPEND, 0o644)
	if err != nil {
		w.t.Error(err)
		return
	}
	w.f = f
}

// write appends k lines, a few at a time with short pauses.
func (w *numberWriter) write(k int) {
	for i := 0; i < k; i++ {
		w.n++
		if _, err := fmt.Fprintf(w.f, "n=%d pad=%s\n", w.n, strings.Repeat("x", w.n%17)); err != nil {
			w.t.Error(err)
			return
		}
		if w.n%20 == 0 {
			time.Sleep(time.Millisecond)
		}
	}
}

// writeFor appends lines for about d.
func (w *numberWriter) writeFor(d time.Duration) {
	end := time.Now().Add(d)
	for time.Now().Before(end) {
		w.write(20)
	}
}

func (w *numberWriter) close() { w.f.Close() }

// collector reads a Follower to its end on a goroutine of its own.
type collector struct {
	seen atomic.Int64
	nums []int
	bad  []string
	err  error
	done chan struct{}
}

func collect(ctx context.Context, src Source) *collector {
	c := &collector{done: make(chan struct{})}
	go func() {
		defer close(c.done)
		for {
			l, err := src.Next(ctx)
			if err != nil {
				if !errors.Is(err, io.EOF) {
					c.err = err
				}
				return
			}
			s, ok := strings.CutPrefix(string(l.Text), "n=")
			s, _, _ = strings.Cut(s, " ")
			n, err := strconv.Atoi(s)
			if !ok || err != nil {
				c.bad = append(c.bad, string(l.Text))
				continue
			}
			c.nums = append(c.nums, n)
			c.seen.Add(1)
		}
	}()
	return c
}

// waitSeen waits until the collector has n lines.
func (c *collector) waitSeen(t *testing.T, n int64) {
	t.Helper()
	deadline := time.Now().Add(10 * time.Second)
	for c.seen.Load() < n {
		if time.Now().After(deadline) {
			t.Fatalf("reader saw %d lines, want %d", c.seen.Load(), n)
		}
		time.Sleep(5 * time.Millisecond)
	}
}

// check waits for the end and checks that 1..n were each read once.
func (c *collector) check(t *testing.T, n int) {
	t.Helper()
	select {
	case <-c.done:
	case <-time.After(20 * time.Second):
		t.Fatal("the follower did not end")
	}
	if c.err != nil {
		t.Fatalf("Next: %v", c.err)
	}
	if len(c.bad) > 0 {
		t.Errorf("%d lines not written by the writer, first %q", len(c.bad), c.bad[0])
	}
	count := make([]int, n+1)
	for _, k := range c.nums {
		if k < 1 || k > n {
			t.Errorf("line %d was never written", k)
			continue
		}
		count[k]++
	}
	missing, twice := 0, 0
	for k := 1; k <= n; k++ {
		switch {
		case count[k] == 0:
			missing++
		case count[k] > 1:
			twice++
		}
	}
	if missing > 0 || twice > 0 {
		t.Errorf("of %d lines, %d were lost and %d read more than once", n, missing, twice)
	}
}

func hasEvent(s SourceStatus, kind string) bool {
	for _, e := range s.Events {
		if e.Kind == kind && !e.Time.IsZero() {
			return true
		}
	}
	return false
}

// noLeaks fails the test if goroutines started during it outlive it.
func noLeaks(t *testing.T) {
	before := runtime.NumGoroutine()
	t.Cleanup(func() {
		deadline := time.Now().Add(2 * time.Second)
		for runtime.NumGoroutine() > before {
			if time.Now().After(deadline) {
				buf := make([]byte, 1<<16)
				t.Errorf("goroutines: %d before, %d after\n%s", before, runtime.NumGoroutine(), buf[:runtime.Stack(buf, true)])
				return
			}
			time.Sleep(10 * time.Millisecond)
		}
	})
}

func newTestFollower(t *testing.T, path string, opt FollowOptions) *Follower {
	t.Helper()
	if opt.RotateGrace == 0 {
		opt.RotateGrace = testGrace
	}
	if opt.Idle == 0 {
		opt.Idle = testGrace + 700*time.Millisecond
	}
	fl, err := NewFollower(path, opt)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { fl.Close() })
	return fl
}

func TestFollowRenameRotation(t *testing.T) {
	for _, poll := range []bool{false, true} {
		name := "notify"
		if poll {
			name = "poll" // scenario 5: no change notification
		}
		t.Run(name, func(t *testing.T) {
			noLeaks(t)
			dir := t.TempDir()
			path := filepath.Join(dir, "app.log")
			w := openWriter(t, path)
			w.write(300)
			fl := newTestFollower(t, path, FollowOptions{FromStart: true, Poll: poll, PollInterval: 20 * time.Millisecond})
			c := collect(context.Background(), fl)
			c.waitSeen(t, int64(w.n))

			// Rotation 1: the writer goes on writing to the renamed file
			// for twice the grace before it reopens the name.
			if err := os.Rename(path, path+".1"); err != nil {
				t.Fatal(err)
			}
			w.writeFor(2 * testGrace)
			w.reopen(path)
			w.write(300)
			// Rotation 2, soon after: the name moves on again while the
			// follower is still draining the first file. The new file
			// holds the name for several looks (see Follower on files
			// that hold it for less).
			w.writeFor(8 * 20 * time.Millisecond)
			if err := os.Rename(path, path+".2"); err != nil {
				t.Fatal(err)
			}
			w.write(100)
			w.reopen(path)
			w.write(300)
			w.close()
			c.check(t, w.n)
			if st := fl.Status(); !hasEvent(st, "rotated") {
				t.Errorf("no rotated event: %+v", st.Events)
			}
		})
	}
}

func TestFollowCopyTruncate(t *testing.T) {
	noLeaks(t)
	dir := t.TempDir()
	path := filepath.Join(dir, "app.log")
	w := openWriter(t, path)
	w.write(300)
	fl := newTestFollower(t, path, FollowOptions{FromStart: true})
	c := collect(context.Background(), fl)
	for round := 0; round < 2; round++ {
		// copytruncate loses what the follower has not read when the
		// truncation comes (see Follower), so the writer waits for it.
		c.waitSeen(t, int64(w.n))
		copyFile(t, path, path+".1")
		if err := os.Truncate(path, 0); err != nil {
			t.Fatal(err)
		}
		// More bytes than the file held, at once: the follower may next
		// see a file larger than its offset, rewritten underneath.
		w.write(400)
	}
	w.close()
	c.check(t, w.n)
	if st := fl.Status(); !hasEvent(st, "truncated") {
		t.Errorf("no truncated event: %+v", st.Events)
	}
}

func copyFile(t *testing.T, from, to string) {
	b, err := os.ReadFile(from)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(to, b, 0o644); err != nil {
		t.Fatal(err)
	}
}

func TestFollowDeletedAndCreated(t *testing.T) {
	noLeaks(t)
	dir := t.TempDir()
	path := filepath.Join(dir, "app.log")
	w := openWriter(t, path)
	w.write(300)
	fl := newTestFollower(t, path, FollowOptions{FromStart: true})
	c := collect(context.Background(), fl)
	c.waitSeen(t, int64(w.n))
	if err := os.Remove(path); err != nil {
		t.Fatal(err)
	}
	// The writer still holds the deleted file and writes on for a while.
	w.writeFor(testGrace / 2)
	w.reopen(path)
	w.write(300)
	w.close()
	c.check(t, w.n)
	if st := fl.Status(); !hasEvent(st, "missing") {
		t.Errorf("no missing event: %+v", st.Events)
	}
}

func TestFollowMissingAtStart(t *testing.T) {
	noLeaks(t)
	dir := t.TempDir()
	path := filepath.Join(dir, "later.log")
	fl := newTestFollower(t, path, FollowOptions{}) // from the end: a new file is read whole
	c := collect(context.Background(), fl)
	deadline := time.Now().Add(5 * time.Second)
	for fl.Status().State != StateWaiting {
		if time.Now().After(deadline) {
			t.Fatalf("state %q, want waiting", fl.Status().State)
		}
		time.Sleep(5 * time.Millisecond)
	}
	if st := fl.Status(); !hasEvent(st, "missing") || !strings.Contains(st.Note, "waiting") {
		t.Errorf("status while waiting: %+v", st)
	}
	w := openWriter(t, path)
	w.write(500)
	c.waitSeen(t, 500)
	if st := fl.Status(); st.State != StateLive || !hasEvent(st, "appeared") {
		t.Errorf("status after the file appeared: %+v", st)
	}
	w.write(100)
	w.close()
	c.check(t, w.n)
}

func TestFollowStartPosition(t *testing.T) {
	tests := []struct {
		name    string
		content string
		opt     FollowOptions
		want    []string
	}{
		{"end", "a\nb\nc\n", FollowOptions{}, []string{"new#4"}},
		{"end, half-written last line read whole", "a\nb\nc", FollowOptions{}, []string{"cnew#3"}},
		{"lines 2", "a\nb\nc\n", FollowOptions{Lines: 2}, []string{"b#2", "c#3", "new#4"}},
		{"lines more than the file", "a\nb\n", FollowOptions{Lines: 9}, []string{"a#1", "b#2", "new#3"}},
		{"from start", "a\nb\n", FollowOptions{FromStart: true}, []string{"a#1", "b#2", "new#3"}},
		{"empty file", "", FollowOptions{Lines: 3}, []string{"new#1"}},
		// Past lineCountMax (set to 5 bytes below) the lines before are not
		// counted, and the note says so.
		{"end, too far to count", "a\nb\nc\n", FollowOptions{}, []string{"new#1"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if strings.Contains(tt.name, "too far") {
				defer func(m int64) { lineCountMax = m }(lineCountMax)
				lineCountMax = 5
			}
			path := filepath.Join(t.TempDir(), "f.log")
			if err := os.WriteFile(path, []byte(tt.content), 0o644); err != nil {
				t.Fatal(err)
			}
			tt.opt.Idle = 300 * time.Millisecond
			fl := newTestFollower(t, path, tt.opt)
			ctx := context.Background()
			var got []string
			// The first Next fixes the start; append after it begins.
			first := make(chan struct{})
			go func() {
				for fl.Status().Note == "" {
					time.Sleep(time.Millisecond)
				}
				f, _ := os.OpenFile(path, os.O_WRONLY|os.O_APPEND, 0)
				f.WriteString("new\n")
				f.Close()
				close(first)
			}()
			for {
				l, err := fl.Next(ctx)
				if err != nil {
					break
				}
				got = append(got, string(l.Text)+"#"+strconv.FormatInt(l.Num, 10))
			}
			<-first
			if strings.Join(got, "|") != strings.Join(tt.want, "|") {
				t.Errorf("got %q, want %q", got, tt.want)
			}
			if note := fl.Status().Note; strings.Contains(tt.name, "too far") != strings.Contains(note, "line numbers count from byte 6") {
				t.Errorf("note %q", note)
			}
		})
	}
}

func TestFollowLongLineAndUnterminatedEnd(t *testing.T) {
	path := filepath.Join(t.TempDir(), "f.log")
	content := "short\n" + strings.Repeat("y", 100) + "\nok\ntail-without-newline"
	if err := os.WriteFile(path, []byte(content), 0o644); err != nil {
		t.Fatal(err)
	}
	fl := newTestFollower(t, path, FollowOptions{FromStart: true, MaxLine: 50, Idle: 200 * time.Millisecond})
	var got []string
	for {
		l, err := fl.Next(context.Background())
		if err != nil {
			if !errors.Is(err, io.EOF) {
				t.Fatal(err)
			}
			break
		}
		if l.TooLong {
			got = append(got, "<too long>")
			continue
		}
		got = append(got, string(l.Text))
	}
	want := "short|<too long>|ok|tail-without-newline"
	if strings.Join(got, "|") != want {
		t.Errorf("got %q, want %q", strings.Join(got, "|"), want)
	}
}

func TestFollowStdin(t *testing.T) {
	noLeaks(t)
	pr, pw := io.Pipe()
	fl := newTestFollower(t, "-", FollowOptions{Stdin: pr, Idle: -1})
	c := collect(context.Background(), fl)
	var wg sync.WaitGroup
	wg.Add(1)
	go func() {
		defer wg.Done()
		for i := 1; i <= 5000; i++ {
			fmt.Fprintf(pw, "n=%d x\n", i)
		}
		pw.Close()
	}()
	c.check(t, 5000)
	wg.Wait()
	if st := fl.Status(); st.State != StateDone || st.Lines != 5000 {
		t.Errorf("status %+v", st)
	}
}

func TestFollowContextEnds(t *testing.T) {
	noLeaks(t)
	path := filepath.Join(t.TempDir(), "f.log")
	os.WriteFile(path, nil, 0o644)
	fl := newTestFollower(t, path, FollowOptions{Idle: -1})
	ctx, cancel := context.WithTimeout(context.Background(), 50*time.Millisecond)
	defer cancel()
	if _, err := fl.Next(ctx); !errors.Is(err, context.DeadlineExceeded) {
		t.Errorf("Next = %v, want the context's end", err)
	}
}

func TestFollowUnreadable(t *testing.T) {
	if os.Geteuid() == 0 {
		t.Skip("root reads files whatever their mode")
	}
	path := filepath.Join(t.TempDir(), "secret.log")
	os.WriteFile(path, []byte("a\n"), 0o000)
	fl := newTestFollower(t, path, FollowOptions{})
	_, err := fl.Next(context.Background())
	if err == nil || !strings.Contains(err.Error(), "permission denied") {
		t.Errorf("Next = %v, want permission denied", err)
	}
	if _, err := fl.Next(context.Background()); !errors.Is(err, io.EOF) {
		t.Errorf("second Next = %v, want io.EOF", err)
	}
}
