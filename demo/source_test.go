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

func TestSourcePaced(t *testing.T) {
	// 1,000 lines/s for 0.3 s: about 300 lines, released in batches.
	src := NewSource(1, 0, 1000)
	ctx, cancel := context.WithTimeout(context.Background(), 300*time.Millisecond)
	defer cancel()
	n := 0
	for {
		if _, err := src.Next(ctx); err != nil {
			if !errors.Is(err, context.DeadlineExceeded) {
				t.Fatal(err)
			}
			break
		}
		n++
	}
	// Only the upper bound: a busy machine may give fewer lines, never
	// more than have fallen due.
	if n > 301 {
		t.Errorf("%d lines in 0.3 s at 1,000 lines/s, want at most 300", n)
	}
	if st := src.Status(); st.State != "live" {
		t.Errorf("state of a paced demo = %q, want live", st.State)
	}
}
