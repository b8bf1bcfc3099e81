package parse

import (
	"context"
	"fmt"
	"io"
	"testing"
	"time"
)

// linesSource gives fixed lines, then io.EOF.
type linesSource struct {
	lines []string
	i     int
}

func (s *linesSource) Next(ctx context.Context) (Line, error) {
	if s.i >= len(s.lines) {
		return Line{}, io.EOF
	}
	s.i++
	return Line{Text: []byte(s.lines[s.i-1]), Num: int64(s.i), Source: "topic/0"}, nil
}
func (s *linesSource) Status() SourceStatus { return SourceStatus{Name: "topic", State: StateReading} }
func (s *linesSource) Close() error         { return nil }

// TestSourceReplayerPaces: a source's records are paced by their
// timestamps once the format is learnt from the first lines: at 2× speed,
// records 3 s apart are released 1.5 s apart (the fake clock's deadlines).
func TestSourceReplayerPaces(t *testing.T) {
	base := time.Date(2026, 12, 2, 6, 0, 0, 0, time.UTC)
	var lines []string
	for i := range learnLines + 4 {
		lines = append(lines, fmt.Sprintf(`{"ts":"%s","berth":"b%d"}`, base.Add(time.Duration(i)*3*time.Second).Format(time.RFC3339), i%3))
	}
	clock := newFakeClock()
	r, err := NewSourceReplayer(&linesSource{lines: lines}, ReplayOptions{Speed: 2, Clock: clock})
	if err != nil {
		t.Fatal(err)
	}
	got := nextLines(t, r)
	// The learning lines and the first with a known format go at once.
	for range learnLines + 1 {
		<-got
	}
	start := clock.Now()
	for i := 1; i <= 3; i++ {
		at := clock.awaitWaiter(t)
		if want := start.Add(time.Duration(i) * 1500 * time.Millisecond); !at.Equal(want) {
			t.Fatalf("record %d due at %v, want %v", i, at.Sub(start), want.Sub(start))
		}
		clock.AdvanceTo(at)
		<-got
	}
	if st := r.Status(); st.Name != "topic" || st.State != StateReplaying || st.Note != "2× speed" {
		t.Errorf("status %+v", st)
	}
}
