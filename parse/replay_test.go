package parse

import (
	"bytes"
	"compress/gzip"
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/klauspost/compress/zstd"
)

// fakeClock is a Clock that moves only when the test says so.
type fakeClock struct {
	mu      sync.Mutex
	now     time.Time
	waiters []fakeWaiter
	added   chan struct{} // a waiter was added
}

type fakeWaiter struct {
	at time.Time
	ch chan time.Time
}

func newFakeClock() *fakeClock {
	return &fakeClock{now: time.Date(2030, 1, 1, 0, 0, 0, 0, time.UTC), added: make(chan struct{}, 1000)}
}

func (c *fakeClock) Now() time.Time {
	c.mu.Lock()
	defer c.mu.Unlock()
	return c.now
}

func (c *fakeClock) After(d time.Duration) <-chan time.Time {
	c.mu.Lock()
	defer c.mu.Unlock()
	ch := make(chan time.Time, 1)
	if d <= 0 {
		ch <- c.now
		return ch
	}
	c.waiters = append(c.waiters, fakeWaiter{c.now.Add(d), ch})
	c.added <- struct{}{}
	return ch
}

// Advance moves the clock to t and fires the waiters due.
func (c *fakeClock) AdvanceTo(t time.Time) {
	c.mu.Lock()
	defer c.mu.Unlock()
	c.now = t
	kept := c.waiters[:0]
	for _, w := range c.waiters {
		if !w.at.After(t) {
			w.ch <- t
		} else {
			kept = append(kept, w)
		}
	}
	c.waiters = kept
}

// awaitWaiter waits until the replayer waits on the clock and returns the
// latest deadline waited for.
func (c *fakeClock) awaitWaiter(t *testing.T) time.Time {
	t.Helper()
	select {
	case <-c.added:
	case <-time.After(10 * time.Second):
		t.Fatal("the replayer never waited on the clock")
	}
	c.mu.Lock()
	defer c.mu.Unlock()
	return c.waiters[len(c.waiters)-1].at
}

func writeFile(t *testing.T, path, content string) {
	t.Helper()
	if err := os.WriteFile(path, []byte(content), 0o644); err != nil {
		t.Fatal(err)
	}
}

// nextLines reads a source on a goroutine of its own; at the test's end it
// stops it and closes the source, in that order.
func nextLines(t *testing.T, src Source) <-chan string {
	ctx, cancel := context.WithCancel(context.Background())
	out := make(chan string)
	done := make(chan struct{})
	t.Cleanup(func() {
		cancel()
		<-done
		src.Close()
	})
	go func() {
		defer close(done)
		defer close(out)
		for {
			l, err := src.Next(ctx)
			if err != nil {
				return
			}
			select {
			case out <- string(l.Text):
			case <-ctx.Done():
				return
			}
		}
	}()
	return out
}

func TestReplayPacing(t *testing.T) {
	// Record times (seconds) and, at 2× with gaps capped at 2 s, the wall
	// time each record is due: (t - t_prev)/2 each, the 1 h gap cut to 2 s.
	// The dues are worked out by hand from that rule.
	dir := t.TempDir()
	path := filepath.Join(dir, "a.log")
	secs := []float64{0, 1, 3, 3.5, 3603.5, 3604.5}
	wantDue := []time.Duration{0, 500 * time.Millisecond, 1500 * time.Millisecond, 1750 * time.Millisecond,
		3750 * time.Millisecond, 4250 * time.Millisecond}
	var b strings.Builder
	base := time.Date(2024, 5, 1, 12, 0, 0, 0, time.UTC)
	for i, s := range secs {
		at := base.Add(time.Duration(s * float64(time.Second)))
		fmt.Fprintf(&b, `{"time":"%s","n":%d}`+"\n", at.Format(time.RFC3339Nano), i)
	}
	writeFile(t, path, b.String())

	clock := newFakeClock()
	start := clock.Now()
	r, err := NewReplayer([]string{path}, ReplayOptions{Speed: 2, Clock: clock})
	if err != nil {
		t.Fatal(err)
	}
	lines := nextLines(t, r)
	if l := <-lines; !strings.Contains(l, `"n":0`) {
		t.Fatalf("first line %q", l)
	}
	for i := 1; i < len(secs); i++ {
		due := clock.awaitWaiter(t)
		if got := due.Sub(start); got != wantDue[i] {
			t.Errorf("record %d due at %v, want %v", i, got, wantDue[i])
		}
		select {
		case l := <-lines:
			t.Fatalf("record released before its time: %q", l)
		default:
		}
		clock.AdvanceTo(due)
		if l := <-lines; !strings.Contains(l, fmt.Sprintf(`"n":%d`, i)) {
			t.Fatalf("line %q, want record %d", l, i)
		}
	}
	st := r.Status()
	if !strings.Contains(st.Note, "shortened") || !hasEvent(st, "gap") {
		t.Errorf("the shortened gap is not shown: %+v", st)
	}
}

func TestReplayPauseStepResume(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "a.log")
	var b strings.Builder
	for i := 0; i < 10; i++ {
		fmt.Fprintf(&b, "ts=%d n=%d\n", 1700000000+i, i) // one record a second
	}
	writeFile(t, path, b.String())
	clock := newFakeClock()
	r, err := NewReplayer([]string{path}, ReplayOptions{Speed: 1, Clock: clock, Paused: true})
	if err != nil {
		t.Fatal(err)
	}
	lines := nextLines(t, r)
	if st := r.Status(); st.State != StatePaused {
		t.Errorf("state %q, want paused", st.State)
	}
	r.Step(3) // released at once, whatever the pace
	for i := 0; i < 3; i++ {
		if l := <-lines; !strings.HasSuffix(l, fmt.Sprintf("n=%d", i)) {
			t.Fatalf("step: line %q, want n=%d", l, i)
		}
	}
	select {
	case l := <-lines:
		t.Fatalf("a paused replay released %q", l)
	case <-time.After(50 * time.Millisecond):
	}
	clock.AdvanceTo(clock.Now().Add(time.Hour)) // time passing while paused releases nothing
	r.Resume()
	due := clock.awaitWaiter(t)
	if got := due.Sub(clock.Now()); got != time.Second {
		t.Errorf("after resuming, the next record is due in %v, want its own 1s gap", got)
	}
	clock.AdvanceTo(due)
	if l := <-lines; !strings.HasSuffix(l, "n=3") {
		t.Fatalf("line %q, want n=3", l)
	}
}

func TestReplayMaxSpeedAndOrder(t *testing.T) {
	dir := t.TempDir()
	// Given newest first; ordered by their first timestamps.
	late := filepath.Join(dir, "late.log")
	early := filepath.Join(dir, "early.log")
	notime := filepath.Join(dir, "notime.log")
	writeFile(t, late, `{"ts":"2024-05-02T00:00:00Z","n":3}`+"\n"+`{"ts":"2024-05-02T00:00:01Z","n":4}`+"\n")
	writeFile(t, early, `{"ts":"2024-05-01T00:00:00Z","n":1}`+"\n"+`{"ts":"2024-05-01T00:00:01Z","n":2}`+"\n")
	writeFile(t, notime, `{"n":5}`+"\n")
	tests := []struct {
		name string
		opt  ReplayOptions
		want string
	}{
		{"by first time", ReplayOptions{}, "1 2 3 4 5"},
		{"keep order", ReplayOptions{KeepOrder: true}, "5 3 4 1 2"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			tt.opt.Clock = newFakeClock() // never advanced: max speed must not wait on it
			r, err := NewReplayer([]string{notime, late, early}, tt.opt)
			if err != nil {
				t.Fatal(err)
			}
			defer r.Close()
			var got []string
			for {
				l, err := r.Next(context.Background())
				if err != nil {
					break
				}
				_, n, _ := strings.Cut(string(l.Text), `"n":`)
				got = append(got, strings.TrimSuffix(n, "}"))
			}
			if strings.Join(got, " ") != tt.want {
				t.Errorf("got %v, want %s", got, tt.want)
			}
			st := r.Status()
			if st.State != StateDone || st.Lines != 5 || st.BytesRead != st.BytesTotal || st.BytesTotal == 0 {
				t.Errorf("status %+v", st)
			}
			if eta, ok := r.ETA(); ok && eta != 0 {
				t.Errorf("ETA at the end %v", eta)
			}
		})
	}
}

func TestReplayCompressed(t *testing.T) {
	dir := t.TempDir()
	var b bytes.Buffer
	for i := 0; i < 2000; i++ {
		fmt.Fprintf(&b, "ts=%d level=info n=%d\n", 1700000000+i, i)
	}
	plain := b.Bytes()
	paths := map[string][]byte{"a.log": plain, "a.log.gz": gzipBytes(t, plain), "a.log.zst": zstdBytes(t, plain)}
	for name, content := range paths {
		t.Run(name, func(t *testing.T) {
			p := filepath.Join(dir, name)
			if err := os.WriteFile(p, content, 0o644); err != nil {
				t.Fatal(err)
			}
			r, err := NewReplayer([]string{p}, ReplayOptions{})
			if err != nil {
				t.Fatal(err)
			}
			defer r.Close()
			var got bytes.Buffer
			for {
				l, err := r.Next(context.Background())
				if err != nil {
					break
				}
				got.Write(l.Text)
				got.WriteByte('\n')
			}
			if !bytes.Equal(got.Bytes(), plain) {
				t.Errorf("%s: replayed text differs from the original", name)
			}
		})
	}
}

func gzipBytes(t testing.TB, p []byte) []byte {
	var b bytes.Buffer
	zw := gzip.NewWriter(&b)
	zw.Write(p)
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func zstdBytes(t testing.TB, p []byte) []byte {
	zw, err := zstd.NewWriter(nil)
	if err != nil {
		t.Fatal(err)
	}
	defer zw.Close()
	return zw.EncodeAll(p, nil)
}

func TestParseSpeed(t *testing.T) {
	tests := []struct {
		in   string
		want float64
		ok   bool
	}{
		{"max", 0, true}, {"1", 1, true}, {"10x", 10, true}, {"0.5", 0.5, true},
		{"0", 0, false}, {"-2", 0, false}, {"fast", 0, false},
	}
	for _, tt := range tests {
		t.Run(tt.in, func(t *testing.T) {
			got, err := ParseSpeed(tt.in)
			if (err == nil) != tt.ok || got != tt.want {
				t.Errorf("ParseSpeed(%q) = %v, %v", tt.in, got, err)
			}
		})
	}
}

func TestETA(t *testing.T) {
	// A quarter read in 10 s leaves three quarters: 30 s at that rate.
	if eta, ok := ETA(25, 100, 10*time.Second); !ok || eta != 30*time.Second {
		t.Errorf("ETA = %v, %v", eta, ok)
	}
	if _, ok := ETA(0, 100, time.Second); ok {
		t.Error("an ETA with nothing read")
	}
}
