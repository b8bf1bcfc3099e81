package parse

import (
	"bufio"
	"context"
	"errors"
	"io"
	"os"
	"time"
)

// Line is one line from a Source.
type Line struct {
	Text   []byte // without its line ending; valid until the next Next
	Num    int64  // line number within its input, from 1
	Source string // the input's name
	// TooLong: the line was over the limit and Text is empty; it is to be
	// counted as rejected.
	TooLong bool
}

// Source is a stream of lines from one or more inputs: files read once, a
// followed file, a paced replay, standard input.
type Source interface {
	// Next returns the next line. It blocks until one is ready, the
	// source ends (io.EOF), or ctx is done (ctx.Err()). Any other error is
	// a fault of the current input, after every line before it; Next may
	// be called again to go on with the next input.
	Next(ctx context.Context) (Line, error)
	// Status describes the source now; safe to call from any goroutine.
	Status() SourceStatus
	// Close releases the source.
	Close() error
}

// SourceState is what a source is doing.
type SourceState string

// Source states.
const (
	StateReading   SourceState = "reading"   // reading files once, as fast as it can
	StateLive      SourceState = "live"      // following a live file or pipe
	StateReplaying SourceState = "replaying" // replaying archives at a pace
	StateWaiting   SourceState = "waiting"   // waiting for a file to appear
	StatePaused    SourceState = "paused"    // a replay paused by the user
	StateDone      SourceState = "done"      // every input read to its end
	StateFailed    SourceState = "failed"    // stopped by a fault (listed in Events)
)

// SourceStatus describes a source at one moment.
type SourceStatus struct {
	Name       string
	State      SourceState
	BytesRead  int64 // compressed bytes, for compressed inputs
	BytesTotal int64 // 0 when unknown (pipes, live files)
	Lines      int64
	Events     []SourceEvent
	// Note is a short line for the user (e.g. "gap of 3m12s shortened").
	Note string
	// Parts are the partitions of a partitioned source (a Kafka topic),
	// nil for files.
	Parts []PartStatus
}

// PartStatus is one partition of a partitioned source.
type PartStatus struct {
	Name     string
	Position int64 // the next offset to read
	End      int64 // the log's end (high watermark) as last seen; -1 unknown
	Lag      int64 // End - Position; -1 unknown
	Records  int64 // records read from it
	// Until is where a bounded read stops (report, replay); -1 none.
	Until int64
}

// SourceEvent is something that happened to an input: rotation,
// truncation, a missing file, a fault.
type SourceEvent struct {
	Time   time.Time
	Kind   string // "rotated", "truncated", "missing", "appeared", "gap", "fault"
	Detail string
}

// FileSource reads files (plain, .gz, .zst; "-" for stdin) once, in order.
type FileSource struct {
	// Stdin is what "-" reads (default os.Stdin).
	Stdin io.Reader

	paths   []string
	maxLine int

	cur   io.ReadCloser
	lines *Lines
	idx   int
	name  string

	statusBox
	ctx      context.Context // of the Next call under way: reads give up when it ends
	stopRead func() bool     // undoes the context's hold on the open file
	count    *countingReader
	buf      *bufio.Reader // between count and the decompressor
}

// NewFileSource reads paths in order with lines of at most maxLine bytes.
func NewFileSource(paths []string, maxLine int) *FileSource {
	fs := &FileSource{paths: paths, maxLine: maxLine}
	fs.status.State = StateReading
	if len(paths) == 1 {
		fs.status.Name = paths[0]
	} else {
		fs.status.Name = pluralFiles(len(paths))
	}
	for _, p := range paths {
		if p == "-" {
			continue
		}
		if fi, err := os.Stat(p); err == nil {
			fs.status.BytesTotal += fi.Size()
		}
	}
	return fs
}

func pluralFiles(n int) string {
	if n == 1 {
		return "1 file"
	}
	return itoa(n) + " files"
}

func itoa(n int) string {
	if n == 0 {
		return "0"
	}
	var b [20]byte
	i := len(b)
	for n > 0 {
		i--
		b[i] = byte('0' + n%10)
		n /= 10
	}
	return string(b[i:])
}

// Next implements Source.
func (fs *FileSource) Next(ctx context.Context) (Line, error) {
	fs.ctx = ctx
	for {
		if err := ctx.Err(); err != nil {
			return Line{}, err
		}
		if fs.lines == nil {
			if fs.idx >= len(fs.paths) {
				fs.setState(StateDone)
				return Line{}, io.EOF
			}
			p := fs.paths[fs.idx]
			fs.idx++
			if err := fs.open(ctx, p); err != nil {
				if ctx.Err() != nil {
					return Line{}, ctx.Err()
				}
				fs.event("fault", p+": "+err.Error())
				return Line{}, &SourceError{Source: p, Err: err}
			}
		}
		text, num, err := fs.lines.Next()
		switch {
		case err == nil:
			fs.addLine()
			return Line{Text: text, Num: num, Source: fs.name}, nil
		case errors.Is(err, ErrLineTooLong):
			fs.addLine()
			return Line{Num: num, Source: fs.name, TooLong: true}, nil
		case errors.Is(err, io.EOF):
			fs.closeCur()
		case ctx.Err() != nil:
			// Interrupted in a read (a stream with no newline, a quiet
			// FIFO): not a fault of the input.
			fs.closeCur()
			return Line{}, ctx.Err()
		default:
			name := fs.name
			// The stored file's offset of the fault: what was read from
			// it less what the buffer still holds.
			off := fs.count.n - int64(fs.buf.Buffered())
			err = explainRead(err)
			fs.event("fault", (&SourceError{Source: name, Err: err, Offset: off}).Error())
			fs.closeCur()
			return Line{}, &SourceError{Source: name, Err: err, Offset: off}
		}
	}
}

// NextBlock is Next a block of lines at a time (Lines.AppendBlock): it
// appends lines of one input to block and their places to lines, as room
// allows, and returns the input's name. full says that it stopped at a
// line room had no place for. The lines appended come before err: io.EOF
// at the end of the last input, ctx.Err(), or a fault of the input as
// Next gives it. At the end of an input it returns its lines with a nil
// error; the next call goes on with the next input.
func (fs *FileSource) NextBlock(ctx context.Context, block []byte, lines []BlockLine, room *BlockRoom) (_ []byte, _ []BlockLine, source string, full bool, err error) {
	fs.ctx = ctx
	for {
		if err := ctx.Err(); err != nil {
			return block, lines, fs.name, false, err
		}
		if fs.lines == nil {
			if fs.idx >= len(fs.paths) {
				fs.setState(StateDone)
				return block, lines, fs.name, false, io.EOF
			}
			p := fs.paths[fs.idx]
			fs.idx++
			if err := fs.open(ctx, p); err != nil {
				if ctx.Err() != nil {
					return block, lines, fs.name, false, ctx.Err()
				}
				fs.event("fault", p+": "+err.Error())
				return block, lines, p, false, &SourceError{Source: p, Err: err}
			}
		}
		n0 := len(lines)
		block, lines, full, err = fs.lines.AppendBlock(block, lines, room)
		fs.addLines(len(lines) - n0)
		name := fs.name
		switch {
		case err == nil:
			return block, lines, name, full, nil
		case errors.Is(err, io.EOF):
			fs.closeCur()
			if len(lines) > n0 {
				return block, lines, name, false, nil
			}
		case ctx.Err() != nil:
			fs.closeCur()
			return block, lines, name, false, ctx.Err()
		default:
			off := fs.count.n - int64(fs.buf.Buffered())
			err = explainRead(err)
			fs.event("fault", (&SourceError{Source: name, Err: err, Offset: off}).Error())
			fs.closeCur()
			return block, lines, name, false, &SourceError{Source: name, Err: err, Offset: off}
		}
	}
}

func (fs *FileSource) open(ctx context.Context, p string) error {
	var raw io.ReadCloser
	if p == "-" {
		in := fs.Stdin
		if in == nil {
			in = os.Stdin
		}
		raw = io.NopCloser(in)
	} else {
		f, err := openCancellable(ctx, p)
		if err != nil {
			return explainOpen(err)
		}
		// A read from a FIFO or socket that waits for data ends when ctx
		// does (regular files take no deadline, and do not wait).
		fs.stopRead = context.AfterFunc(ctx, func() { f.SetReadDeadline(time.Now()) })
		raw = f
	}
	fs.count = &countingReader{r: raw, fs: fs}
	fs.buf = bufio.NewReaderSize(fs.count, 256<<10)
	rc, err := decompress(fs.buf, raw.Close)
	if err != nil {
		raw.Close()
		return err
	}
	fs.cur, fs.name = rc, p
	fs.lines = NewLines(rc, fs.maxLine)
	return nil
}

func (fs *FileSource) closeCur() {
	if fs.stopRead != nil {
		fs.stopRead()
		fs.stopRead = nil
	}
	if fs.cur != nil {
		fs.cur.Close()
	}
	fs.cur, fs.lines = nil, nil
}

func (fs *FileSource) addLine() {
	fs.mu.Lock()
	fs.status.Lines++
	fs.mu.Unlock()
}

func (fs *FileSource) addLines(n int) {
	if n == 0 {
		return
	}
	fs.mu.Lock()
	fs.status.Lines += int64(n)
	fs.mu.Unlock()
}

func (fs *FileSource) setState(s SourceState) {
	fs.mu.Lock()
	fs.status.State = s
	fs.mu.Unlock()
}

// Close implements Source.
func (fs *FileSource) Close() error {
	fs.closeCur()
	return nil
}

// SourceError is a fault of one input: it could not be opened, or reading
// it failed at Offset (bytes of the file as stored).
type SourceError struct {
	Source string
	Offset int64
	Err    error
}

func (e *SourceError) Error() string {
	if e.Offset > 0 {
		return e.Source + ": at byte " + itoa(int(e.Offset)) + ": " + e.Err.Error()
	}
	return e.Source + ": " + e.Err.Error()
}

func (e *SourceError) Unwrap() error { return e.Err }

// countingReader counts the bytes read from the stored file.
type countingReader struct {
	r  io.Reader
	n  int64
	fs *FileSource
}

func (c *countingReader) Read(p []byte) (int, error) {
	if ctx := c.fs.ctx; ctx != nil && ctx.Err() != nil {
		// A stream with no newline (/dev/zero) is read without end while
		// the line is dropped as too long: it stops here.
		return 0, ctx.Err()
	}
	n, err := c.r.Read(p)
	c.n += int64(n)
	c.fs.mu.Lock()
	c.fs.status.BytesRead += int64(n)
	c.fs.mu.Unlock()
	return n, err
}
