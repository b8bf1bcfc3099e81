package ui

import (
	"time"

	"bitsift/model"
)

// historyLen is how many samples of each field's entropy are kept: two
// minutes at one a second.
const historyLen = 120

// history keeps each field's entropy over recent frames, one sample per
// interval, so the screen can draw how it moved.
//
// Invariant: every series has at most historyLen samples, oldest first; a
// field that appeared late has a shorter series.
type history struct {
	every  time.Duration // 0: a sample per frame
	last   time.Time
	series map[string][]float64
	n      int // samples taken
}

func newHistory(every time.Duration) *history {
	return &history{every: every, series: make(map[string][]float64)}
}

// add samples s if the interval has passed since the last sample.
func (h *history) add(s *model.Snapshot, now time.Time) {
	if h.n > 0 && now.Sub(h.last) < h.every && !now.Before(h.last) {
		return
	}
	h.last = now
	h.n++
	for i := range s.Fields {
		f := &s.Fields[i]
		v := append(h.series[f.Name], f.Entropy)
		if len(v) > historyLen {
			v = append(v[:0], v[len(v)-historyLen:]...)
		}
		h.series[f.Name] = v
	}
}

// of is the series of a field, oldest first.
func (h *history) of(name string) []float64 { return h.series[name] }

// change is how much a field's entropy moved over the last w samples
// (newest minus oldest), for sorting by trend.
func (h *history) change(name string, w int) float64 {
	v := h.series[name]
	if len(v) < 2 {
		return 0
	}
	if len(v) > w {
		v = v[len(v)-w:]
	}
	return v[len(v)-1] - v[0]
}
