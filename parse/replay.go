package parse

import (
	"context"
	"fmt"
	"sort"
	"strconv"
	"strings"
	"sync"
	"time"
)

// DefaultMaxGap is the longest wall-clock pause a paced replay makes
// between two records: a night without traffic replays in two seconds,
// not in hours at 1×, and the shortening is shown.
const DefaultMaxGap = 2 * time.Second

// maxGapEvents is how many shortened gaps are listed as events; past it
// they are only counted in the Note.
const maxGapEvents = 100

// ReplayOptions say how a Replayer reads. The zero value replays the files
// as fast as they can be read, ordered by their first timestamps.
type ReplayOptions struct {
	// Speed is the pace: 0 (or less) as fast as possible ("max"); N
	// replays N times as fast as the records' timestamps say they came.
	Speed float64
	// KeepOrder reads the files in the order given instead of ordering
	// them by their first timestamps.
	KeepOrder bool
	// MaxGap caps each wall-clock pause of a paced replay (0:
	// DefaultMaxGap).
	MaxGap time.Duration
	// Format is the format used to read the records' timestamps (""
	// detects it from the first file's first lines).
	Format string
	// MaxLine is the longest line in bytes (0: DefaultMaxLine).
	MaxLine int
	// Clock paces the replay (nil: SystemClock).
	Clock Clock
	// Paused starts the replay paused (Step or Resume releases records).
	Paused bool
}

// ParseSpeed reads a --speed value: "max" (returned as 0) or a positive
// factor such as 1, 10, 0.5 or 10x.
func ParseSpeed(s string) (float64, error) {
	s = strings.TrimSpace(strings.ToLower(s))
	if s == "max" || s == "" {
		return 0, nil
	}
	f, err := strconv.ParseFloat(strings.TrimSuffix(s, "x"), 64)
	if err != nil || !(f > 0 && f <= 1e9) { // NaN fails both

		return 0, fmt.Errorf("speed %q: use max or a factor above 0 such as 1, 10 or 0.5", s)
	}
	return f, nil
}

// Replayer replays archived log files (plain, gzip or zstd) as a Source:
// several files in the order of their first timestamps, as fast as
// possible or at N times their original pace, with long gaps shortened to
// MaxGap. The screen may Pause, Resume and Step it from any goroutine.
//
// Pacing reads each record's time with the stream's TimeFinder: a record
// is released (Next returns it) gap/Speed after the one before it, gap
// being the difference of their timestamps, at most MaxGap. Records
// without a readable time, and records earlier than the one before, are
// released at once.
//
// Only one goroutine may call Next.
type Replayer struct {
	files Source // a FileSource over the ordered files, or any source (replay_source.go)
	opt   ReplayOptions
	clock Clock
	order []string

	format Format // for reading timestamps; nil: no pacing possible
	// learning: a source replayer still gathering sample lines to detect
	// format from (replay_source.go).
	learning bool
	sample   [][]byte
	rec      Record
	times    TimeFinder
	prevT    int64
	haveT    bool

	wake chan struct{}

	mu          sync.Mutex
	paused      bool
	pausedAt    time.Time
	pausedTotal time.Duration
	allowance   int // records Step lets through while paused
	reanchor    bool
	due         time.Time
	startedAt   time.Time
	gaps        int64
	longestGap  time.Duration
	events      []SourceEvent
	note        string
}

// NewReplayer replays paths with opt. Files are opened to read their
// first timestamps (unless opt.KeepOrder); a file that cannot be read is
// kept in its place and reported as a fault by Next when its turn comes.
// Files without a readable timestamp go after those with one, in the
// order given. "-" (standard input) cannot be peeked at and keeps its
// place.
func NewReplayer(paths []string, opt ReplayOptions) (*Replayer, error) {
	if opt.MaxGap <= 0 {
		opt.MaxGap = DefaultMaxGap
	}
	if opt.Speed < 0 {
		opt.Speed = 0
	}
	r := &Replayer{opt: opt, clock: opt.Clock, wake: make(chan struct{}, 1), reanchor: true, paused: opt.Paused}
	if r.clock == nil {
		r.clock = SystemClock{}
	}
	if opt.Format != "" {
		f, err := ByName(opt.Format)
		if err != nil {
			return nil, err
		}
		r.format = f
	}
	r.order = orderByFirstTime(paths, opt, &r.format)
	r.files = NewFileSource(r.order, opt.MaxLine)
	r.startedAt = r.clock.Now()
	if r.paused {
		r.pausedAt = r.startedAt
	}
	return r, nil
}

// Order is the order in which the files are read.
func (r *Replayer) Order() []string { return append([]string(nil), r.order...) }

// Next implements Source.
func (r *Replayer) Next(ctx context.Context) (Line, error) {
	l, err := r.files.Next(ctx)
	if err != nil {
		return l, err
	}
	var gap time.Duration
	if r.opt.Speed > 0 && !l.TooLong {
		gap = r.gapBefore(l.Text)
	}
	if err := r.release(ctx, gap); err != nil {
		return Line{}, err
	}
	return l, nil
}

// gapBefore is the wall-clock wait before the record in line, from its
// timestamp and the previous one's.
func (r *Replayer) gapBefore(line []byte) time.Duration {
	if r.format == nil {
		r.learn(line)
		return 0
	}
	r.rec.Reset()
	if r.format.Parse(line, &r.rec) != nil {
		return 0
	}
	t, ok := r.times.Find(&r.rec)
	if !ok {
		return 0
	}
	if !r.haveT {
		r.prevT, r.haveT = t, true
		return 0
	}
	if t <= r.prevT {
		return 0
	}
	orig := time.Duration(t - r.prevT)
	r.prevT = t
	wall := time.Duration(float64(orig) / r.opt.Speed)
	if wall > r.opt.MaxGap {
		r.shortened(orig, wall)
		wall = r.opt.MaxGap
	}
	return wall
}

// shortened records a gap cut down to MaxGap.
func (r *Replayer) shortened(orig, wall time.Duration) {
	r.mu.Lock()
	defer r.mu.Unlock()
	r.gaps++
	r.longestGap = max(r.longestGap, orig)
	if r.gaps <= maxGapEvents {
		r.events = append(r.events, SourceEvent{Time: r.clock.Now(), Kind: "gap",
			Detail: fmt.Sprintf("gap of %s in the records (%s at %g×) shortened to %s", round(orig), round(wall), r.opt.Speed, r.opt.MaxGap)})
	}
	r.note = fmt.Sprintf("%d gaps over %s shortened, longest %s", r.gaps, r.opt.MaxGap, round(r.longestGap))
	if r.gaps == 1 {
		r.note = fmt.Sprintf("gap of %s shortened to %s", round(orig), r.opt.MaxGap)
	}
}

func round(d time.Duration) time.Duration {
	switch {
	case d >= time.Minute:
		return d.Round(time.Second)
	case d >= time.Second:
		return d.Round(10 * time.Millisecond)
	}
	return d.Round(time.Millisecond)
}

// release blocks until the record read may be returned: its gap has passed
// (paced), and the replay is not paused or a Step lets it through.
func (r *Replayer) release(ctx context.Context, gap time.Duration) error {
	r.mu.Lock()
	if !r.reanchor {
		r.due = r.due.Add(gap)
	}
	r.mu.Unlock()
	for {
		r.mu.Lock()
		now := r.clock.Now()
		if r.paused && r.allowance == 0 {
			r.mu.Unlock()
			select {
			case <-ctx.Done():
				return ctx.Err()
			case <-r.wake:
			}
			continue
		}
		if r.paused {
			// A stepped record goes at once; the pace restarts from it.
			r.allowance--
			r.due, r.reanchor = now, false
			r.mu.Unlock()
			return nil
		}
		if r.reanchor {
			r.due, r.reanchor = now.Add(gap), false
		}
		if now.Sub(r.due) > r.opt.MaxGap {
			// The reader fell behind the pace: go on from here rather
			// than rush to catch up.
			r.due = now
		}
		wait := r.due.Sub(now)
		r.mu.Unlock()
		if r.opt.Speed <= 0 || wait <= 0 {
			return nil
		}
		select {
		case <-ctx.Done():
			return ctx.Err()
		case <-r.clock.After(wait):
		case <-r.wake:
		}
	}
}

// Pause stops releasing records until Resume or Step. Safe from any
// goroutine.
func (r *Replayer) Pause() {
	r.mu.Lock()
	if !r.paused {
		r.paused, r.pausedAt = true, r.clock.Now()
	}
	r.mu.Unlock()
	r.poke()
}

// Resume goes on at the pace, from now: the record waiting is released its
// own gap after the resumption. Safe from any goroutine.
func (r *Replayer) Resume() {
	r.mu.Lock()
	if r.paused {
		r.paused, r.allowance, r.reanchor = false, 0, true
		r.pausedTotal += r.clock.Now().Sub(r.pausedAt)
	}
	r.mu.Unlock()
	r.poke()
}

// Step releases the next n records at once and stays paused (it pauses a
// running replay first): the screen steps one window with Step(window
// size). Safe from any goroutine.
func (r *Replayer) Step(n int) {
	if n <= 0 {
		return
	}
	r.mu.Lock()
	if !r.paused {
		r.paused, r.pausedAt = true, r.clock.Now()
	}
	r.allowance += n
	r.mu.Unlock()
	r.poke()
}

// Paused says whether the replay is paused.
func (r *Replayer) Paused() bool {
	r.mu.Lock()
	defer r.mu.Unlock()
	return r.paused
}

func (r *Replayer) poke() {
	select {
	case r.wake <- struct{}{}:
	default:
	}
}

// Status implements Source: the files' progress, with the replay's state
// ("replaying", "paused", "done"), its gap events and a Note.
func (r *Replayer) Status() SourceStatus {
	s := r.files.Status()
	r.mu.Lock()
	defer r.mu.Unlock()
	if s.State != StateDone {
		s.State = StateReplaying
		if r.paused {
			s.State = StatePaused
		}
	}
	s.Events = append(s.Events, r.events...)
	sort.SliceStable(s.Events, func(i, j int) bool { return s.Events[i].Time.Before(s.Events[j].Time) })
	speed := "max speed"
	if r.opt.Speed > 0 {
		speed = fmt.Sprintf("%g× speed", r.opt.Speed)
	}
	s.Note = speed
	if r.note != "" {
		s.Note += "; " + r.note
	}
	return s
}

// ETA estimates the time left at the rate so far, pauses left out; false
// when no estimate can be made yet.
func (r *Replayer) ETA() (time.Duration, bool) {
	s := r.files.Status()
	r.mu.Lock()
	elapsed := r.clock.Now().Sub(r.startedAt) - r.pausedTotal
	if r.paused {
		elapsed -= r.clock.Now().Sub(r.pausedAt)
	}
	r.mu.Unlock()
	return ETA(s.BytesRead, s.BytesTotal, elapsed)
}

// Close implements Source.
func (r *Replayer) Close() error { return r.files.Close() }

// orderByFirstTime orders paths by the timestamp of their first timed
// record, and sets *format from the first file whose lines it recognises
// if it is nil.
func orderByFirstTime(paths []string, opt ReplayOptions, format *Format) []string {
	type peeked struct {
		path string
		t    int64
		ok   bool
	}
	ps := make([]peeked, len(paths))
	for i, p := range paths {
		ps[i].path = p
		if p == "-" || (opt.KeepOrder && *format != nil) {
			continue
		}
		f := *format
		t, ok, found := firstTime(p, f, opt.MaxLine)
		ps[i].t, ps[i].ok = t, ok
		if *format == nil && found != nil {
			*format = found
		}
	}
	if !opt.KeepOrder {
		sort.SliceStable(ps, func(i, j int) bool {
			a, b := ps[i], ps[j]
			if a.ok != b.ok {
				return a.ok
			}
			return a.ok && a.t < b.t
		})
	}
	out := make([]string, len(ps))
	for i, p := range ps {
		out[i] = p.path
	}
	return out
}

// peekLines is how many lines of a file are read to find its first time.
const peekLines = 64

// firstTime reads the first lines of path and returns the time of its
// first record that has one, with the format it read them in (f, or the
// one detected when f is nil).
func firstTime(path string, f Format, maxLine int) (int64, bool, Format) {
	rc, err := Open(path)
	if err != nil {
		return 0, false, nil
	}
	defer rc.Close()
	lines := NewLines(rc, maxLine)
	var sample [][]byte
	for len(sample) < peekLines {
		text, _, err := lines.Next()
		if err != nil && len(text) == 0 {
			break
		}
		sample = append(sample, append([]byte(nil), text...))
	}
	if f == nil {
		d, err := Detect(sample)
		if err != nil {
			return 0, false, nil
		}
		f = d.Format
	}
	var rec Record
	var tf TimeFinder
	for _, l := range sample {
		rec.Reset()
		if f.Parse(l, &rec) != nil {
			continue
		}
		if t, ok := tf.Find(&rec); ok {
			return t, true, f
		}
	}
	return 0, false, f
}
