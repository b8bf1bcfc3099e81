package parse

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// readAll calls Next until the end, on this goroutine, collecting numbered
// lines into c (no goroutine: the reader is stalled whenever the test is
// not calling it).
func readN(t *testing.T, fl *Follower, c *collector, n int) {
	t.Helper()
	for i := 0; i < n; i++ {
		l, err := fl.Next(context.Background())
		if err != nil {
			t.Fatalf("Next after %d of %d lines: %v", i, n, err)
		}
		c.add(l)
	}
}

func (c *collector) add(l Line) {
	var n int
	if _, err := fmt.Sscanf(string(l.Text), "n=%d ", &n); err != nil {
		c.bad = append(c.bad, string(l.Text))
		return
	}
	c.nums = append(c.nums, n)
	c.seen.Add(1)
}

func readToEnd(t *testing.T, fl *Follower, c *collector) {
	t.Helper()
	for {
		l, err := fl.Next(context.Background())
		if errors.Is(err, io.EOF) {
			close(c.done)
			return
		}
		if err != nil {
			t.Fatal(err)
		}
		c.add(l)
	}
}

// TestFollowCopyTruncateThenGrow: the file is truncated and written past
// the old read offset while the reader is stalled, so the next look finds
// a file longer than the offset with no read ever returning nothing. The
// bytes before the offset are not those read: the follower reads the file
// again from its start, every line once.
func TestFollowCopyTruncateThenGrow(t *testing.T) {
	for _, poll := range []bool{false, true} {
		t.Run(fmt.Sprint("poll=", poll), func(t *testing.T) {
			noLeaks(t)
			path := filepath.Join(t.TempDir(), "app.log")
			w := openWriter(t, path)
			w.write(300)
			fl := newTestFollower(t, path, FollowOptions{FromStart: true, Poll: poll, PollInterval: 20 * time.Millisecond, Idle: 500 * time.Millisecond})
			c := &collector{done: make(chan struct{})}
			readN(t, fl, c, 300)
			for round := 0; round < 2; round++ {
				copyFile(t, path, path+".1")
				if err := os.Truncate(path, 0); err != nil {
					t.Fatal(err)
				}
				w.write(1000) // well past the old offset before the next look
				readN(t, fl, c, 1000)
			}
			w.close()
			readToEnd(t, fl, c)
			c.check(t, w.n)
			if st := fl.Status(); !hasEvent(st, "truncated") {
				t.Errorf("no truncated event: %+v", st.Events)
			}
		})
	}
}

// TestFollowIdleShorterThanGrace: --idle shorter than --rotate-grace; the
// rotation's grace is not idle time, so the new file is read.
func TestFollowIdleShorterThanGrace(t *testing.T) {
	noLeaks(t)
	path := filepath.Join(t.TempDir(), "app.log")
	w := openWriter(t, path)
	w.write(300)
	fl := newTestFollower(t, path, FollowOptions{FromStart: true, RotateGrace: 900 * time.Millisecond, Idle: 150 * time.Millisecond})
	c := collect(context.Background(), fl)
	c.waitSeen(t, int64(w.n))
	if err := os.Rename(path, path+".1"); err != nil {
		t.Fatal(err)
	}
	w.write(100) // the writer has not reopened yet
	w.reopen(path)
	w.write(300)
	w.close()
	c.check(t, w.n)
}

// TestFollowPauseMidLineNotIdle: the writer pauses in the middle of a line
// for longer than --idle; the half line is not sent as a line, and nothing
// after it is lost.
func TestFollowPauseMidLineNotIdle(t *testing.T) {
	noLeaks(t)
	path := filepath.Join(t.TempDir(), "app.log")
	w := openWriter(t, path)
	w.write(50)
	idle := 250 * time.Millisecond
	fl := newTestFollower(t, path, FollowOptions{FromStart: true, Idle: idle})
	c := collect(context.Background(), fl)
	c.waitSeen(t, int64(w.n))
	w.n++
	fmt.Fprintf(w.f, "n=%d pad=", w.n)
	// The follower has the half line; the pause is twice --idle (and half
	// of what a half line holds idle off for).
	time.Sleep(2 * idle)
	fmt.Fprintf(w.f, "xx\n")
	w.write(50)
	w.close()
	c.check(t, w.n)
}

// TestWatchDirectoryShowsFault: following a folder fails with a fault that
// is listed as an event and shown as the state ("failed"), never "done"
// with no fault listed.
func TestWatchDirectoryShowsFault(t *testing.T) {
	noLeaks(t)
	dir := t.TempDir()
	fl := newTestFollower(t, dir, FollowOptions{})
	_, err := fl.Next(context.Background())
	if err == nil || errors.Is(err, io.EOF) || !strings.Contains(err.Error(), "folder") {
		t.Fatalf("Next on a folder: %v", err)
	}
	st := fl.Status()
	if st.State != StateFailed || !hasEvent(st, "fault") {
		t.Errorf("state %q, events %+v; want failed with a fault event", st.State, st.Events)
	}
}
