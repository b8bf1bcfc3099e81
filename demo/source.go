package demo

import (
	"context"
	"io"
	"strconv"
	"sync"
	"time"

	"bitsift/parse"
)

// ScreenRate is the pace of the demo on the screen, in lines per second:
// that of a busy service, and the one at which the incident (record
// IncidentStart) arrives 35 s in.
const ScreenRate = 2000

// pace is how often a paced Source wakes to release the lines that have
// fallen due: it sleeps per batch, never per line.
const pace = 10 * time.Millisecond

// Source is the demo stream as a parse.Source, paced at a rate in lines per
// second (0: as fast as it is read), stamped with the wall clock when paced.
type Source struct {
	g     *Generator
	rate  float64
	lines int64 // 0: endless
	buf   []byte
	n     int64 // lines given
	start time.Time
	// Clock paces the source (default the wall clock); tests set a fake
	// one before the first Next.
	Clock parse.Clock

	mu     sync.Mutex
	status parse.SourceStatus
}

// NewSource returns the demo stream of the given seed and length (0:
// endless) at rate lines per second.
func NewSource(seed uint64, lines int64, rate float64) *Source {
	s := &Source{g: New(seed, lines), rate: rate, lines: lines, Clock: parse.SystemClock{}}
	state := parse.StateReading
	if rate > 0 {
		s.g.Now = time.Now
		state = parse.StateLive
	}
	from, _ := s.g.Incident()
	note := "incident from line " + strconv.FormatInt(from+1, 10)
	if rate > 0 {
		note += " (" + (time.Duration(float64(from)/rate) * time.Second).Round(time.Second).String() + " in)"
	}
	s.status = parse.SourceStatus{Name: "demo (quayside)", State: state, Note: note}
	return s
}

// Next implements parse.Source.
func (s *Source) Next(ctx context.Context) (parse.Line, error) {
	if err := ctx.Err(); err != nil {
		return parse.Line{}, err
	}
	if s.lines > 0 && s.n >= s.lines {
		s.mu.Lock()
		s.status.State = parse.StateDone
		s.mu.Unlock()
		return parse.Line{}, io.EOF
	}
	if s.rate > 0 {
		if err := s.wait(ctx); err != nil {
			return parse.Line{}, err
		}
	}
	s.buf = s.g.Append(s.buf[:0])
	s.n++
	s.mu.Lock()
	s.status.Lines = s.n
	s.status.BytesRead += int64(len(s.buf)) + 1
	s.mu.Unlock()
	return parse.Line{Text: s.buf, Num: s.n, Source: "demo"}, nil
}

// wait returns when line s.n+1 is due.
func (s *Source) wait(ctx context.Context) error {
	if s.start.IsZero() {
		s.start = s.Clock.Now()
	}
	for {
		due := int64(s.Clock.Now().Sub(s.start).Seconds() * s.rate)
		if s.n < due {
			return nil
		}
		select {
		case <-ctx.Done():
			return ctx.Err()
		case <-s.Clock.After(pace):
		}
	}
}

// Status implements parse.Source.
func (s *Source) Status() parse.SourceStatus {
	s.mu.Lock()
	defer s.mu.Unlock()
	st := s.status
	st.Events = append([]parse.SourceEvent(nil), st.Events...)
	return st
}

// Close implements parse.Source.
func (s *Source) Close() error { return nil }
