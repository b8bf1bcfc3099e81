package parse

import (
	"context"
	"errors"
	"io"
	"sync"
	"time"
)

// stdinReader reads standard input on a goroutine of its own, so that Next
// can give up when its context ends: a read from a pipe cannot be
// interrupted. The goroutine ends when the input ends or fails, or, after
// close, with its next read; a blocked read of a pipe that never ends or
// closes holds it until the process exits.
type stdinReader struct {
	chunks chan stdinChunk
	done   chan struct{}
	once   sync.Once
	split  splitter
	num    int64
	err    error // the input's end (io.EOF) or fault, once it came
	// finished: the end was reported (a fault once, then io.EOF).
	finished bool
}

type stdinChunk struct {
	b   []byte
	err error
}

func newStdinReader(r io.Reader, maxLine int) *stdinReader {
	s := &stdinReader{chunks: make(chan stdinChunk), done: make(chan struct{}), split: newSplitter(maxLine)}
	go s.run(r)
	return s
}

func (s *stdinReader) run(r io.Reader) {
	for {
		b := make([]byte, splitReadSize)
		n, err := r.Read(b)
		if n > 0 {
			select {
			case s.chunks <- stdinChunk{b: b[:n]}:
			case <-s.done:
				return
			}
		}
		if err != nil {
			select {
			case s.chunks <- stdinChunk{err: err}:
			case <-s.done:
			}
			return
		}
	}
}

func (s *stdinReader) close() { s.once.Do(func() { close(s.done) }) }

// nextStdin is Next for the path "-".
func (fl *Follower) nextStdin(ctx context.Context) (Line, error) {
	s := fl.stdin
	for {
		if text, tooLong, ok := s.split.line(); ok {
			return fl.emitStdin(text, tooLong), nil
		}
		if s.err != nil {
			if text, tooLong, ok := s.split.rest(); ok {
				return fl.emitStdin(text, tooLong), nil
			}
			if !s.finished {
				s.finished = true
				fl.mu.Lock()
				fl.status.State = StateDone
				fl.mu.Unlock()
				if !errors.Is(s.err, io.EOF) {
					fl.event("fault", "stdin: "+s.err.Error())
					return Line{}, &SourceError{Source: "stdin", Offset: fl.Status().BytesRead, Err: s.err}
				}
			}
			return Line{}, io.EOF
		}
		c, err := s.receive(ctx, fl.opt.Idle)
		if err != nil {
			return Line{}, err
		}
		if c.err != nil {
			s.err = c.err
			continue
		}
		s.split.push(c.b)
		fl.addBytes(len(c.b))
	}
}

// receive waits for the next chunk; no data for idle (> 0) is an end.
func (s *stdinReader) receive(ctx context.Context, idle time.Duration) (stdinChunk, error) {
	var timeout <-chan time.Time
	if idle > 0 {
		t := time.NewTimer(idle)
		defer t.Stop()
		timeout = t.C
	}
	select {
	case <-ctx.Done():
		return stdinChunk{}, ctx.Err()
	case <-timeout:
		return stdinChunk{err: io.EOF}, nil
	case c := <-s.chunks:
		return c, nil
	}
}

func (fl *Follower) emitStdin(text []byte, tooLong bool) Line {
	fl.stdin.num++
	fl.mu.Lock()
	fl.status.Lines++
	fl.mu.Unlock()
	return Line{Text: text, Num: fl.stdin.num, Source: "-", TooLong: tooLong}
}
