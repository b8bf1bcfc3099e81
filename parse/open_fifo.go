package parse

import (
	"context"
	"os"
	"syscall"
)

// openCancellable opens path for reading. Opening a FIFO waits in the
// kernel until a writer opens it, which no context can interrupt, so a
// FIFO is opened on a goroutine of its own; when ctx ends first the open
// is released by opening the FIFO's write end (which then succeeds at
// once, as a reader is waiting) and the file is closed.
func openCancellable(ctx context.Context, path string) (*os.File, error) {
	fi, err := os.Stat(path)
	if err != nil || fi.Mode()&os.ModeNamedPipe == 0 {
		return os.Open(path)
	}
	type result struct {
		f   *os.File
		err error
	}
	done := make(chan result, 1)
	go func() {
		f, err := os.Open(path)
		done <- result{f, err}
	}()
	select {
	case r := <-done:
		return r.f, r.err
	case <-ctx.Done():
		if w, err := os.OpenFile(path, os.O_WRONLY|syscall.O_NONBLOCK, 0); err == nil {
			w.Close()
		}
		go func() {
			if r := <-done; r.f != nil {
				r.f.Close()
			}
		}()
		return nil, ctx.Err()
	}
}
