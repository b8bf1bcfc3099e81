package cli

import (
	"context"
	"io"
	"sync/atomic"
	"time"

	"bitsift/parse"
)

// untilSource ends its source (io.EOF) once a deadline has passed: watch
// --for. On the screen the figures then stay up, marked done.
type untilSource struct {
	parse.Source
	until time.Time
	note  string
	over  atomic.Bool
}

func newUntilSource(src parse.Source, until time.Time, note string) *untilSource {
	return &untilSource{Source: src, until: until, note: note}
}

// Next implements parse.Source.
func (u *untilSource) Next(ctx context.Context) (parse.Line, error) {
	if u.over.Load() {
		return parse.Line{}, io.EOF
	}
	dctx, cancel := context.WithDeadline(ctx, u.until)
	defer cancel()
	l, err := u.Source.Next(dctx)
	if err != nil && ctx.Err() == nil && dctx.Err() != nil {
		u.over.Store(true)
		return parse.Line{}, io.EOF
	}
	return l, err
}

// Status implements parse.Source.
func (u *untilSource) Status() parse.SourceStatus {
	s := u.Source.Status()
	if u.over.Load() {
		s.State, s.Note = parse.StateDone, u.note
	}
	return s
}
