package parse

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"syscall"
	"time"

	"github.com/fsnotify/fsnotify"
)

// Follow defaults.
const (
	// DefaultRotateGrace is how long a file that lost its name must stay
	// quiet before the follower leaves it for its successor: writers that
	// reopen their log on a signal or a timer keep writing to the renamed
	// file for a while (a second or two is common practice).
	DefaultRotateGrace = 2 * time.Second
	// DefaultPollInterval is how often a polling follower looks at the
	// file, and how often a notified one looks all the same (notifications
	// miss a file renamed into another folder).
	DefaultPollInterval = 250 * time.Millisecond
	// notifyRecheck is how often a notified follower looks without being
	// told to.
	notifyRecheck = time.Second
)

// FollowOptions say how a Follower reads. The zero value follows from the
// end of the file with change notification and the default grace.
type FollowOptions struct {
	// FromStart reads the file from its first byte rather than its end.
	FromStart bool
	// Lines starts that many lines before the end (ignored with
	// FromStart). A half-written last line is always read whole.
	Lines int
	// RotateGrace is how long a renamed or deleted file must have been
	// quiet before the follower goes on with the file that now has the
	// name (0: DefaultRotateGrace).
	RotateGrace time.Duration
	// Poll looks at the file every PollInterval instead of waiting for
	// change notifications: for network and FUSE filesystems that send
	// none.
	Poll bool
	// PollInterval is the polling period (0: DefaultPollInterval).
	PollInterval time.Duration
	// Idle ends the stream (Next returns io.EOF) once no line has come for
	// this long; 0 or less follows until the context ends.
	Idle time.Duration
	// MaxLine is the longest line in bytes (0: DefaultMaxLine).
	MaxLine int
	// Stdin is what the path "-" reads (nil: os.Stdin).
	Stdin io.Reader
}

// Follower reads a live file as it grows, across rotations, implementing
// Source. Every byte written to the file, or to a file that had its name,
// is read once:
//
//   - rename rotation: when the name moves to a new file (or to none), the
//     old file is read to its end until it has been quiet for RotateGrace,
//     since writers keep appending to it until they reopen; then the new
//     file is read from its start. Files that take the name meanwhile are
//     opened at once and read in turn, so two quick rotations lose nothing.
//   - copytruncate: a file that shrinks below the offset read, or whose
//     last bytes read have changed (truncated and rewritten past the offset
//     between two looks), is read again from its start. Lines written
//     between the copy and the truncation, and lines the follower had not
//     yet read when the file was truncated, are gone from the file: the
//     method itself loses them, and no follower can read them back.
//   - deleted and created again: as for a rename; the new file is read from
//     its start.
//   - a file that holds the name for less than one look (a notification,
//     or PollInterval when polling) between two rotations is never seen:
//     rotations are minutes apart in practice, not milliseconds.
//   - missing: the follower waits for the file (State "waiting") and reads
//     it from its start when it appears.
//
// Rotations, truncations, and missing and appearing files are recorded as
// events in Status. The path "-" reads standard input to its end.
//
// Only one goroutine may call Next; Status may be called from any.
type Follower struct {
	path  string
	dir   string
	opt   FollowOptions
	stdin *stdinReader

	watcher *fsnotify.Watcher
	cur     *followFile   // nil while waiting for the file
	queue   []*followFile // files that took the name after cur, oldest first
	started bool
	ended   bool
	// missing: the name was seen naming no file, and no new one has been
	// taken yet (an "appeared" event is due when one is).
	missing  bool
	lastLine time.Time

	statusBox
}

// NewFollower follows path ("-": standard input) with opt. It fails only
// when change notification cannot be set up and opt.Poll is off; a missing
// or unreadable file is reported by Next and in Status.
func NewFollower(path string, opt FollowOptions) (*Follower, error) {
	if opt.RotateGrace <= 0 {
		opt.RotateGrace = DefaultRotateGrace
	}
	if opt.PollInterval <= 0 {
		opt.PollInterval = DefaultPollInterval
	}
	if opt.Lines < 0 {
		opt.Lines = 0
	}
	fl := &Follower{path: path, dir: filepath.Dir(path), opt: opt}
	fl.status.Name = path
	fl.status.State = StateLive
	if path == "-" {
		fl.status.Name = "stdin"
		r := opt.Stdin
		if r == nil {
			r = os.Stdin
		}
		fl.stdin = newStdinReader(r, opt.MaxLine)
		return fl, nil
	}
	if !opt.Poll {
		w, err := fsnotify.NewWatcher()
		if err == nil {
			err = w.Add(fl.dir)
			if err != nil {
				w.Close()
			}
		}
		if err != nil {
			return nil, fmt.Errorf("follow %s: cannot watch its folder for changes: %w (use --poll)", path, err)
		}
		fl.watcher = w
	}
	return fl, nil
}

// Next implements Source.
func (fl *Follower) Next(ctx context.Context) (Line, error) {
	if fl.stdin != nil {
		return fl.nextStdin(ctx)
	}
	if fl.ended {
		return Line{}, io.EOF
	}
	if !fl.started {
		fl.started = true
		fl.lastLine = time.Now()
		if err := fl.begin(); err != nil {
			return Line{}, fl.fail(&SourceError{Source: fl.path, Err: err})
		}
	}
	for {
		if err := ctx.Err(); err != nil {
			return Line{}, err
		}
		if c := fl.cur; c != nil {
			if text, tooLong, ok := c.split.line(); ok {
				return fl.emit(c, text, tooLong), nil
			}
			if l, emitted, again := fl.truncated(c); again {
				if emitted {
					return l, nil
				}
				continue
			}
			n, err := c.read(time.Now())
			fl.addBytes(n)
			if n > 0 {
				continue
			}
			if err != nil && !errors.Is(err, io.EOF) {
				return Line{}, fl.fail(&SourceError{Source: fl.path, Offset: c.off, Err: explainRead(err)})
			}
			l, emitted, again := fl.atEOF(c)
			if emitted {
				return l, nil
			}
			if again {
				continue
			}
		} else if fl.appear() {
			continue
		}
		if fl.idleOver() {
			if c := fl.cur; c != nil {
				if text, tooLong, ok := c.split.rest(); ok {
					return fl.emit(c, text, tooLong), nil
				}
			}
			fl.end()
			return Line{}, io.EOF
		}
		if err := fl.wait(ctx); err != nil {
			return Line{}, err
		}
	}
}

// begin opens the file at its starting offset, or starts waiting for it.
func (fl *Follower) begin() error {
	c, err := openFollowFile(fl.path, fl.opt.MaxLine, time.Now())
	if errors.Is(err, os.ErrNotExist) {
		fl.setMissing(fl.path + " does not exist yet; waiting for it")
		return nil
	}
	if err != nil {
		return explainOpen(err)
	}
	if c.fi.IsDir() {
		c.close()
		return &explained{"is a folder, not a file (follow one file in it)", syscall.EISDIR}
	}
	off := int64(0)
	if !fl.opt.FromStart {
		if off, err = startOffset(c.f, c.fi.Size(), fl.opt.Lines); err != nil {
			c.close()
			return err
		}
	}
	if err := c.seek(off); err != nil {
		c.close()
		return err
	}
	fl.cur = c
	fl.note("following " + fl.path)
	if off > 0 {
		// Lines are numbered as in the file, so that "line 8,307" is the
		// line an editor shows, not the 8,307th read.
		n, ok, err := countLines(c.f, off, lineCountMax)
		switch {
		case err != nil:
			fl.note(fmt.Sprintf("following %s; line numbers count from byte %d, where following began (%v)", fl.path, off, err))
		case !ok:
			fl.note(fmt.Sprintf("following %s; line numbers count from byte %d, where following began (the %d MB before were not counted)", fl.path, off, off>>20))
		default:
			c.num = n
		}
	}
	return nil
}

// atEOF looks at the file once cur has no more data: a rotation, a
// truncation, or the end of a superseded file. It may return a last
// unterminated line of a file being left (emitted), and says whether there
// is something to read now (again) rather than a change to wait for.
func (fl *Follower) atEOF(c *followFile) (l Line, emitted, again bool) {
	now := time.Now()
	st, err := os.Stat(fl.path)
	switch {
	case err == nil && os.SameFile(st, c.fi):
		c.superseded = false
		if l, emitted, again = fl.truncated(c); again {
			return l, emitted, again
		}
		return Line{}, false, fl.size(c) > c.off
	case err == nil:
		fl.take(st)
	case errors.Is(err, os.ErrNotExist):
	default:
		// An unreadable folder or name: take the file for gone, and say why.
		fl.note(fl.path + ": " + err.Error())
	}
	if fl.size(c) > c.off {
		return Line{}, false, true // more of the old file to read first
	}
	if !c.superseded {
		c.superseded = true
		c.lastData = now
		fl.supersededEvent(c, len(fl.queue) > 0)
	}
	if now.Sub(c.lastData) < fl.opt.RotateGrace {
		return Line{}, false, false
	}
	if text, tooLong, has := c.split.rest(); has {
		l, emitted = fl.emit(c, text, tooLong), true
	}
	c.close()
	fl.cur = nil
	if len(fl.queue) > 0 {
		fl.cur = fl.queue[0]
		fl.queue = fl.queue[1:]
		fl.cur.lastData = now
		fl.note("following " + fl.path + " (new file)")
	} else {
		fl.setMissing("waiting for " + fl.path + " to appear")
	}
	fl.lastLine = now // the grace was no idle time: the idle clock starts again
	return l, emitted, true
}

// truncated looks whether c was truncated (it is shorter than the offset
// read, or the bytes read are no longer there: truncated and written past
// the offset since the last look), and if so starts reading it again from
// its start, returning a half line held from before (emitted). again says
// it was.
func (fl *Follower) truncated(c *followFile) (l Line, emitted, again bool) {
	if size := fl.size(c); size >= c.off && !c.rewritten() {
		return Line{}, false, false
	}
	fl.event("truncated", fmt.Sprintf("%s was truncated at byte %d (copytruncate?); reading it again from its start", fl.path, c.off))
	if text, tooLong, has := c.split.rest(); has {
		l, emitted = fl.emit(c, text, tooLong), true
	}
	if err := c.seek(0); err != nil {
		fl.event("fault", fl.path+": "+err.Error())
	}
	c.num = 0
	return l, emitted, true
}

// idleOver says whether --idle has run out: no line for Idle. A rotation
// in its grace is not idle (the old file may still grow, and the new one
// waits its turn), and neither is a half-written line, for up to
// partialIdle times Idle, since its writer may finish it after a pause.
func (fl *Follower) idleOver() bool {
	if fl.opt.Idle <= 0 {
		return false
	}
	idle := fl.opt.Idle
	if c := fl.cur; c != nil {
		if c.superseded || len(fl.queue) > 0 {
			return false
		}
		if c.split.pending() > 0 {
			idle *= partialIdle
		}
	}
	return time.Since(fl.lastLine) >= idle
}

// partialIdle: a half-written line holds --idle off for this many times
// its length (then it is read as the stream's last line).
const partialIdle = 4

// supersededEvent records that the path no longer names c.
func (fl *Follower) supersededEvent(c *followFile, successor bool) {
	grace := fl.opt.RotateGrace.String()
	links, known := uint64(1), false
	if fi, err := c.f.Stat(); err == nil {
		links, known = linkCount(fi)
	}
	switch {
	case known && links == 0:
		what := "was deleted"
		if successor {
			what = "was deleted and created again"
		}
		fl.event("missing", fmt.Sprintf("%s %s; reading the old file to its end until quiet for %s", fl.path, what, grace))
		fl.missing = !successor
	default:
		what := "was renamed"
		if successor {
			what = "was rotated: a new file has its name"
		}
		fl.event("rotated", fmt.Sprintf("%s %s; reading the old file to its end until quiet for %s", fl.path, what, grace))
		fl.missing = !successor
	}
	fl.note("draining the old " + fl.path + " until quiet for " + grace)
}

// take opens the file that now has the path's name, if it is not cur or
// already queued, and queues it to be read after cur.
func (fl *Follower) take(st os.FileInfo) {
	last := fl.cur
	if n := len(fl.queue); n > 0 {
		last = fl.queue[n-1]
	}
	if last != nil && os.SameFile(st, last.fi) {
		return
	}
	c, err := openFollowFile(fl.path, fl.opt.MaxLine, time.Now())
	if err != nil {
		return // gone again, or not readable yet: look again later
	}
	fl.queue = append(fl.queue, c)
	if fl.missing {
		fl.missing = false
		fl.event("appeared", fl.path+" appeared; reading it from its start after the old file")
	}
}

// appear opens the file while waiting for it.
func (fl *Follower) appear() bool {
	c, err := openFollowFile(fl.path, fl.opt.MaxLine, time.Now())
	if err != nil {
		if !errors.Is(err, os.ErrNotExist) {
			fl.note(fl.path + ": " + explainOpen(err).Error())
		}
		return false
	}
	fl.cur = c
	fl.missing = false
	fl.event("appeared", fl.path+" appeared; reading it from its start")
	fl.mu.Lock()
	fl.status.State = StateLive
	fl.status.Note = "following " + fl.path
	fl.mu.Unlock()
	return true
}

// size is the current size of c's file (its offset when it cannot be told).
func (fl *Follower) size(c *followFile) int64 {
	fi, err := c.f.Stat()
	if err != nil {
		return c.off
	}
	return fi.Size()
}

// wait sleeps until the folder changes, the next look is due, or ctx ends.
func (fl *Follower) wait(ctx context.Context) error {
	d := fl.opt.PollInterval
	if fl.watcher != nil {
		d = notifyRecheck
	}
	if c := fl.cur; c != nil && c.superseded {
		d = min(d, max(time.Millisecond, fl.opt.RotateGrace-time.Since(c.lastData)))
	}
	if c := fl.cur; fl.opt.Idle > 0 && (c == nil || !c.superseded && len(fl.queue) == 0) {
		idle := fl.opt.Idle
		if c != nil && c.split.pending() > 0 {
			idle *= partialIdle
		}
		d = min(d, max(time.Millisecond, idle-time.Since(fl.lastLine)))
	}
	t := time.NewTimer(d)
	defer t.Stop()
	var events <-chan fsnotify.Event
	var errs <-chan error
	if fl.watcher != nil {
		events, errs = fl.watcher.Events, fl.watcher.Errors
	}
	select {
	case <-ctx.Done():
		return ctx.Err()
	case <-t.C:
	case <-events:
	case <-errs:
		// An overflowed event queue only means a look is due, which
		// this is.
	}
	for i := 0; i < 256; i++ { // drop the wake-ups that this look covers
		select {
		case <-events:
		default:
			return nil
		}
	}
	return nil
}

func (fl *Follower) emit(c *followFile, text []byte, tooLong bool) Line {
	c.num++
	fl.lastLine = time.Now()
	fl.mu.Lock()
	fl.status.Lines++
	fl.mu.Unlock()
	return Line{Text: text, Num: c.num, Source: fl.path, TooLong: tooLong}
}

func (fl *Follower) addBytes(n int) {
	if n <= 0 {
		return
	}
	fl.mu.Lock()
	fl.status.BytesRead += int64(n)
	fl.mu.Unlock()
}

func (fl *Follower) setMissing(note string) {
	if !fl.missing {
		fl.missing = true
		fl.event("missing", note)
	}
	fl.mu.Lock()
	fl.status.State = StateWaiting
	fl.status.Note = note
	fl.mu.Unlock()
}

func (fl *Follower) note(s string) {
	fl.mu.Lock()
	fl.status.Note = s
	fl.mu.Unlock()
}

// fail stops following on a fault, which is listed as an event and shown
// as the state, so that no part of a screen says all is well.
func (fl *Follower) fail(err *SourceError) error {
	fl.event("fault", err.Error())
	fl.end()
	fl.mu.Lock()
	fl.status.State = StateFailed
	fl.status.Note = err.Error()
	fl.mu.Unlock()
	return err
}

// end stops following: Next returns io.EOF from now on.
func (fl *Follower) end() {
	fl.ended = true
	fl.closeFiles()
	fl.mu.Lock()
	fl.status.State = StateDone
	fl.mu.Unlock()
}

func (fl *Follower) closeFiles() {
	if fl.cur != nil {
		fl.cur.close()
		fl.cur = nil
	}
	for _, c := range fl.queue {
		c.close()
	}
	fl.queue = nil
}

// Close implements Source. It must not be called during Next.
func (fl *Follower) Close() error {
	fl.ended = true
	fl.closeFiles()
	if fl.stdin != nil {
		fl.stdin.close()
	}
	if fl.watcher != nil {
		fl.watcher.Close()
		fl.watcher = nil
	}
	return nil
}
