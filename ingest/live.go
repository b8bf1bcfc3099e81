package ingest

import (
	"context"
	"errors"
	"io"
	"time"

	"bitsift/model"
	"bitsift/parse"
)

// Frame is what a screen draws at one moment: a snapshot of the model with
// the source's status and the rates measured between frames.
type Frame struct {
	Snap   *model.Snapshot
	Source parse.SourceStatus
	// Rates over the last few seconds: lines read, records taken, bytes
	// of the source read (as stored), each per second.
	LinesPerSec, RecordsPerSec, BytesPerSec float64
	// Ended: the source has ended; no more lines will come.
	Ended bool
	// Err is the first fault of the source, nil if none.
	Err error
	// Cost is how long taking the snapshot held up ingest.
	Cost time.Duration
	// ETA is the time a replay has left, pauses left out; HasETA is false
	// when the source cannot tell (a live file, a replay just begun).
	ETA    time.Duration
	HasETA bool
	// Baseline is the baseline mode in use (a snapshot's Changes says
	// which profile, once there is one).
	Baseline model.BaselineMode
	// Deep: the snapshot was taken with SnapshotOptions.Deep (it lists
	// surprising records and multi-field determinants).
	Deep bool
}

// Pacer controls a paced source (a replay): pause it, resume it, let n
// records through. parse.Replayer is one. Its methods are safe from any
// goroutine.
type Pacer interface {
	Pause()
	Resume()
	Step(n int)
	Paused() bool
}

// BaselineChoice is a baseline a screen asks for.
type BaselineChoice int

// The baseline choices.
const (
	// PinWindow makes the window as it is now the baseline.
	PinWindow BaselineChoice = iota + 1
	// Rolling compares with the previous windows.
	Rolling
)

// Live runs an Ingester on its own goroutine, fed by a Source read on a
// second goroutine, and hands out Frames on request. Lines pass from the
// reader to the owner in batches (see handoff), never one message per line;
// a request is answered between two runs of at most chunkLines lines.
type Live struct {
	// ctx ends with the Live: a snapshot being taken then is given up,
	// so that Stop never waits for a deep analysis.
	ctx context.Context
	in  *Ingester
	src parse.Source
	h   *handoff

	reqs      chan frameReq
	windows   chan model.Window
	baselines chan BaselineChoice
	visits    chan func()
	cancel    context.CancelFunc
	done      chan struct{}

	// Owned by the run goroutine.
	ended bool
	err   error
	rates []rateSample
}

// LiveOptions add to what a Live does.
type LiveOptions struct {
	// RawLines, when above 0, has the Ingester keep the newest RawLines
	// raw lines (Ingester.KeepRaw: none under --redact), read back on the
	// owner goroutine with Visit.
	RawLines int
}

type frameReq struct {
	opt   model.SnapshotOptions
	reply chan *Frame
}

// chunkLines is how many lines the owner takes between two looks at its
// requests: at a few microseconds a line, well under a millisecond.
const chunkLines = 256

// StartLive starts reading src into in. The Live owns both from now on:
// nothing else may use in until Stop returns. Stop (or cancelling ctx) ends
// it.
func StartLive(ctx context.Context, in *Ingester, src parse.Source) *Live {
	return StartLiveWith(ctx, in, src, LiveOptions{})
}

// StartLiveWith is StartLive with options.
func StartLiveWith(ctx context.Context, in *Ingester, src parse.Source, opt LiveOptions) *Live {
	ctx, cancel := context.WithCancel(ctx)
	l := &Live{
		in:        in,
		src:       src,
		h:         newHandoff(),
		reqs:      make(chan frameReq),
		windows:   make(chan model.Window, 1),
		baselines: make(chan BaselineChoice, 1),
		visits:    make(chan func()),
		cancel:    cancel,
		done:      make(chan struct{}),
	}
	in.AddSource(src.Status().Name)
	l.ctx = ctx
	if opt.RawLines > 0 {
		in.KeepRaw(opt.RawLines)
	}
	go l.read(ctx)
	go l.run(ctx)
	return l
}

// read is the reader goroutine: Source.Next in a loop.
func (l *Live) read(ctx context.Context) {
	for {
		line, err := l.src.Next(ctx)
		switch {
		case err == nil:
			if !l.h.put(line, nil) {
				return
			}
			continue
		case errors.Is(err, io.EOF), ctx.Err() != nil:
			l.h.end(err)
			return
		}
		if !l.h.put(parse.Line{}, err) {
			return
		}
	}
}

// run is the owner goroutine: the only one that touches the Ingester.
func (l *Live) run(ctx context.Context) {
	defer close(l.done)
	defer l.h.close()
	for {
		select {
		case <-ctx.Done():
			return
		case <-l.h.ready:
			b, ended, _ := l.h.take()
			l.takeBatch(b)
			if ended && !l.ended {
				l.ended = true
				l.in.Flush()
			}
		case r := <-l.reqs:
			r.reply <- l.frame(r.opt)
		case w := <-l.windows:
			l.in.SetWindow(w)
		case b := <-l.baselines:
			l.setBaseline(b)
		case fn := <-l.visits:
			fn()
		}
	}
}

func (l *Live) setBaseline(b BaselineChoice) {
	switch b {
	case PinWindow:
		l.in.PinBaseline()
	case Rolling:
		l.in.UseRollingBaseline()
	}
}

func (l *Live) takeBatch(b *batch) {
	if err := l.in.takeBatch(b, l.serveUnlessStopping); err != nil && l.err == nil {
		l.err = err
	}
}

// serveUnlessStopping serves between runs of lines, and says to stop
// taking them once the Live is stopping: nobody will read the figures.
func (l *Live) serveUnlessStopping() bool {
	if l.ctx.Err() != nil {
		return false
	}
	l.serve()
	return true
}

// serve answers the requests already waiting, without waiting for any.
func (l *Live) serve() {
	for {
		select {
		case r := <-l.reqs:
			r.reply <- l.frame(r.opt)
		case w := <-l.windows:
			l.in.SetWindow(w)
		case b := <-l.baselines:
			l.setBaseline(b)
		case fn := <-l.visits:
			fn()
		default:
			return
		}
	}
}

type rateSample struct {
	t                     time.Time
	lines, records, bytes int64
}

// rateSpan is how far back the rates look.
const rateSpan = 3 * time.Second

func (l *Live) frame(opt model.SnapshotOptions) *Frame {
	t0 := time.Now()
	status := l.src.Status()
	// The source's events (rotations, truncations, gaps) go into the
	// input accounting, so that the snapshot lists them as a report does.
	l.in.setEvents(status.Events)
	snap, err := l.in.SnapshotContext(l.ctx, opt)
	if err != nil {
		return nil // stopping: Frame's caller gets ErrStopped
	}
	f := &Frame{Snap: snap, Source: status, Ended: l.ended, Err: l.err, Cost: time.Since(t0),
		Baseline: l.in.Model().BaselineMode(), Deep: opt.Deep}
	if e, ok := l.src.(interface{ ETA() (time.Duration, bool) }); ok && !l.ended {
		f.ETA, f.HasETA = e.ETA()
	}
	now := time.Now()
	cur := rateSample{now, snap.Input.Lines, snap.Seen, f.Source.BytesRead}
	// Keep one sample older than the span, so the rates cover it whole.
	for len(l.rates) > 1 && now.Sub(l.rates[1].t) >= rateSpan {
		l.rates = l.rates[1:]
	}
	if len(l.rates) > 0 {
		old := l.rates[0]
		if dt := now.Sub(old.t).Seconds(); dt > 0.05 {
			f.LinesPerSec = float64(cur.lines-old.lines) / dt
			f.RecordsPerSec = float64(cur.records-old.records) / dt
			f.BytesPerSec = float64(cur.bytes-old.bytes) / dt
		}
	}
	l.rates = append(l.rates, cur)
	return f
}

// Frame returns a frame of the newest figures. It waits for the owner to
// finish the chunk of lines it is on (well under a millisecond), then for
// the snapshot. It returns ctx's error, or ErrStopped after Stop.
func (l *Live) Frame(ctx context.Context, opt model.SnapshotOptions) (*Frame, error) {
	r := frameReq{opt: opt, reply: make(chan *Frame, 1)}
	select {
	case l.reqs <- r:
	case <-ctx.Done():
		return nil, ctx.Err()
	case <-l.done:
		return nil, ErrStopped
	}
	select {
	case f := <-r.reply:
		if f == nil {
			return nil, ErrStopped
		}
		return f, nil
	case <-ctx.Done():
		return nil, ctx.Err()
	}
}

// ErrStopped is returned by Frame after the Live has stopped.
var ErrStopped = errors.New("ingest: the live reader has stopped")

// SetWindow asks for the figures to cover window w from now on; it does
// not wait. The model is rebuilt from the records the old window holds
// (see model.Model.WithWindow): a smaller window keeps the newest of them,
// a larger one starts with all of them and fills as records arrive. The
// line and rejection counts cover the whole stream and do not change. When
// several changes are asked for before the owner gets to them, the newest
// wins.
func (l *Live) SetWindow(w model.Window) {
	for {
		select {
		case l.windows <- w:
			return
		default:
		}
		select {
		case <-l.windows:
		default:
		}
	}
}

// SetBaseline asks for a baseline: the window as it is now, or the rolling
// one. It does not wait; the newest request wins.
func (l *Live) SetBaseline(b BaselineChoice) {
	for {
		select {
		case l.baselines <- b:
			return
		default:
		}
		select {
		case <-l.baselines:
		default:
		}
	}
}

// Visit runs fn on the owner goroutine, between two runs of lines, and
// waits for it: fn may read what the Tap feeds without a lock. It returns
// ctx's error, or ErrStopped after Stop (fn has not run then).
func (l *Live) Visit(ctx context.Context, fn func()) error {
	ran := make(chan struct{})
	wrapped := func() { fn(); close(ran) }
	select {
	case l.visits <- wrapped:
	case <-ctx.Done():
		return ctx.Err()
	case <-l.done:
		return ErrStopped
	}
	select {
	case <-ran:
		return nil
	case <-ctx.Done():
		return ctx.Err()
	}
}

// Pacer is the source's pace control when it is a paced source (a
// replay), nil otherwise.
func (l *Live) Pacer() Pacer {
	p, _ := l.src.(Pacer)
	return p
}

// Stop ends ingest and waits for the owner goroutine. The reader goroutine
// ends when the source's Next returns; a read blocked in the kernel (a
// quiet pipe) may outlive Stop, harmlessly.
func (l *Live) Stop() {
	l.cancel()
	<-l.done
}

// Done is closed when the owner goroutine has ended.
func (l *Live) Done() <-chan struct{} { return l.done }
