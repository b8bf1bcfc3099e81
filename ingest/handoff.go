package ingest

import (
	"sync"

	"bitsift/parse"
)

// maxBatch is how many lines the reader may get ahead of the model before
// it waits: it bounds memory and how long the owner is busy between two
// looks at its requests.
const maxBatch = 2048

// handoff passes lines from the reader goroutine to the owner: the reader
// appends to cur under mu and pokes ready when cur stops being empty; the
// owner swaps cur for an empty batch. One poke covers any number of lines,
// so there is no message per line.
//
// Invariant: ready holds a token only if cur is not empty or the reader
// has ended.
type handoff struct {
	mu     sync.Mutex
	space  *sync.Cond // signalled when cur is swapped or the handoff closes
	cur    *batch
	spare  *batch
	ended  bool  // the reader has stopped
	endErr error // io.EOF, or the context's error
	closed bool  // the owner has stopped: the reader must not wait
	ready  chan struct{}
}

func newHandoff() *handoff {
	h := &handoff{cur: &batch{}, spare: &batch{}, ready: make(chan struct{}, 1)}
	h.space = sync.NewCond(&h.mu)
	return h
}

func (h *handoff) poke() {
	select {
	case h.ready <- struct{}{}:
	default:
	}
}

// put appends one line (or a fault); it waits while the batch is full.
// It reports false when the owner has stopped.
func (h *handoff) put(l parse.Line, err error) bool {
	h.mu.Lock()
	defer h.mu.Unlock()
	for len(h.cur.lines) >= maxBatch && !h.closed {
		h.space.Wait()
	}
	if h.closed {
		return false
	}
	b := h.cur
	b.add(l, err)
	if len(b.lines) == 1 {
		h.poke()
	}
	return true
}

// end records that the reader stopped with err.
func (h *handoff) end(err error) {
	h.mu.Lock()
	h.ended, h.endErr = true, err
	h.mu.Unlock()
	h.poke()
}

// take swaps out the pending lines; the batch is the owner's until the
// next take. ended reports that the reader has stopped and every line it
// read is in this or an earlier batch.
func (h *handoff) take() (b *batch, ended bool, endErr error) {
	h.mu.Lock()
	b = h.cur
	h.cur = h.spare
	h.cur.reset()
	h.spare = b
	ended, endErr = h.ended, h.endErr
	h.mu.Unlock()
	h.space.Broadcast()
	return b, ended, endErr
}

// close releases a waiting reader for good.
func (h *handoff) close() {
	h.mu.Lock()
	h.closed = true
	h.mu.Unlock()
	h.space.Broadcast()
}
