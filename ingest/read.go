package ingest

import (
	"context"
	"errors"
	"io"

	"bitsift/parse"
)

// ReadSource reads src to its end, or until ctx is done. It goes on past an
// input that fails (a fault is recorded), and returns the first fault. The
// source's events are taken into the input accounting at the end.
func (in *Ingester) ReadSource(ctx context.Context, src parse.Source) error {
	parallel := parallelOK(src)
	first, err := in.readLines(ctx, src, func() bool { return parallel && in.settled() })
	if err == nil {
		// The rest goes through parallel workers (pipeline.go).
		err = in.pipeline(ctx, src)
		switch {
		case errors.Is(err, io.EOF):
			err = errDone
		case ctx.Err() == nil:
			if first == nil {
				first = err
			}
			err = errDone
		}
	}
	in.Flush()
	in.setEvents(src.Status().Events)
	if err != errDone {
		return err // ctx is done
	}
	return first
}

// readLines takes lines from src one by one until handOff says the rest
// may go to the pipeline (err == nil), the source ends (err == errDone) or
// ctx is done (err == ctx.Err()). first is the first fault of an input;
// reading goes on past it.
func (in *Ingester) readLines(ctx context.Context, src parse.Source, handOff func() bool) (first, err error) {
	for !handOff() {
		l, err := src.Next(ctx)
		switch {
		case err == nil:
			in.take(l)
			continue
		case errors.Is(err, io.EOF):
			return first, errDone
		case ctx.Err() != nil:
			return first, ctx.Err()
		}
		in.fault("", err)
		if first == nil {
			first = err
		}
	}
	return first, nil
}

// errDone is readLines' word for "the source has ended".
var errDone = errors.New("source ended")

// ReadFiles reads each path in turn ("-" is standard input), plain, gzip
// or zstd. It goes on past a file that fails, and returns the first fault.
func (in *Ingester) ReadFiles(ctx context.Context, paths []string) error {
	in.input.Sources = append(in.input.Sources, paths...)
	in.prepareFiles(paths)
	src := parse.NewFileSource(paths, in.cfg.MaxLine)
	src.Stdin = in.cfg.Stdin
	defer src.Close()
	return in.ReadSource(ctx, src)
}

// AddSource names a source whose lines are given with Line.
func (in *Ingester) AddSource(name string) { in.input.Sources = append(in.input.Sources, name) }
