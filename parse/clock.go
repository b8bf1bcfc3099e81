package parse

import "time"

// Clock is the time a Replayer paces itself by. Tests inject a fake one, so
// that pacing is checked against the clock's readings, never by timing a
// run.
type Clock interface {
	Now() time.Time
	// After sends the time on the channel once d has passed (at once when
	// d ≤ 0).
	After(d time.Duration) <-chan time.Time
}

// SystemClock is the wall clock.
type SystemClock struct{}

// Now implements Clock.
func (SystemClock) Now() time.Time { return time.Now() }

// After implements Clock.
func (SystemClock) After(d time.Duration) <-chan time.Time { return time.After(d) }

// ETA estimates how long the rest of an input takes at the rate so far:
// read of total bytes in elapsed. It says false when no estimate can be
// made yet (nothing read, total unknown).
func ETA(read, total int64, elapsed time.Duration) (time.Duration, bool) {
	if read <= 0 || total <= 0 || elapsed <= 0 {
		return 0, false
	}
	if read >= total {
		return 0, true
	}
	return time.Duration(float64(elapsed) * float64(total-read) / float64(read)), true
}
