package demo

import (
	"bytes"
	"context"
	"errors"
	"io"
	"testing"
	"time"
)

func TestSourceMatchesGenerator(t *testing.T) {
	src := NewSource(7, 500, 0)
	g := New(7, 500)
	var want []byte
	for i := int64(1); ; i++ {
		l, err := src.Next(context.Background())
		if errors.Is(err, io.EOF) {
			if i != 501 {
				t.Fatalf("EOF after %d lines, want 500", i-1)
			}
			break
		}
		if err != nil {
			t.Fatal(err)
		}
		want = g.Append(want[:0])
		if !bytes.Equal(l.Text, want) || l.Num != i {
			t.Fatalf("line %d = %q (num %d), want %q", i, l.Text, l.Num, want)
		}
	}
	if st := src.Status(); st.Lines != 500 || st.State != "done" {
		t.Errorf("status after the end = %+v, want 500 lines, done", st)
	}
}

// fakeClock moves only when the source waits: After(d) moves it on by d
// at once.
type fakeClock struct{ now time.Time }

func (c *fakeClock) Now() time.Time { return c.now }

func (c *fakeClock) After(d time.Duration) <-chan time.Time {
	c.now = c.now.Add(d)
	ch := make(chan time.Time, 1)
	ch <- c.now
	return ch
}

// TestSourcePaced: at 1,000 lines/s no line comes before it is due by the
// injected clock, and the 300th comes once 0.3 s have passed on it, give or
// take one wake-up (10 ms). The wall clock plays no part, so a busy
// machine cannot make it fail.
func TestSourcePaced(t *testing.T) {
	src := NewSource(1, 0, 1000)
	clock := &fakeClock{now: time.Date(2025, 3, 2, 6, 0, 0, 0, time.UTC)}
	src.Clock = clock
	start := clock.now
	for n := 1; n <= 300; n++ {
		if _, err := src.Next(context.Background()); err != nil {
			t.Fatal(err)
		}
		due := int(clock.now.Sub(start).Seconds()*1000 + 1e-6)
		if n > due {
			t.Fatalf("line %d came at %v on the clock, when only %d were due", n, clock.now.Sub(start), due)
		}
	}
	if el := clock.now.Sub(start); el < 300*time.Millisecond-pace || el > 300*time.Millisecond+pace {
		t.Errorf("300 lines at 1,000 lines/s took %v on the clock, want 0.3 s", el)
	}
	if st := src.Status(); st.State != "live" {
		t.Errorf("state of a paced demo = %q, want live", st.State)
	}
	// A cancelled context ends the wait.
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := src.Next(ctx); !errors.Is(err, context.Canceled) {
		t.Errorf("Next after cancel: %v", err)
	}
}
