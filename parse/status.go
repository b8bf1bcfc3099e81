package parse

import (
	"sync"
	"time"
)

// statusBox is a source's SourceStatus behind a mutex: the goroutine that
// reads the source writes it, any goroutine may read it. Sources embed it,
// which gives them their Status method.
type statusBox struct {
	mu     sync.Mutex
	status SourceStatus
}

// event appends an event, stamped now.
func (b *statusBox) event(kind, detail string) {
	b.mu.Lock()
	b.status.Events = append(b.status.Events, SourceEvent{Time: time.Now(), Kind: kind, Detail: detail})
	b.mu.Unlock()
}

// Status implements Source: a copy of the status, safe from any goroutine.
func (b *statusBox) Status() SourceStatus {
	b.mu.Lock()
	defer b.mu.Unlock()
	s := b.status
	s.Events = append([]SourceEvent(nil), s.Events...)
	return s
}
