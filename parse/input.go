package parse

import (
	"bufio"
	"bytes"
	"compress/flate"
	"compress/gzip"
	"errors"
	"fmt"
	"io"
	"os"
	"strings"
	"syscall"

	"github.com/klauspost/compress/zstd"
)

// DefaultMaxLine is the longest line accepted, in bytes; longer lines are
// rejected with a reason and skipped in bounded memory.
const DefaultMaxLine = 1 << 20

// ErrLineTooLong is returned by Lines.Next for a line over the limit. The
// line has been consumed; Next can be called again.
var ErrLineTooLong = errors.New("line longer than --max-line")

// Open opens a plain, gzip or zstd file for reading, telling compression by
// its magic bytes rather than its name. "-" is standard input.
func Open(path string) (io.ReadCloser, error) {
	if path == "-" {
		return Decompress(io.NopCloser(os.Stdin))
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, explainOpen(err)
	}
	rc, err := Decompress(f)
	if err != nil {
		f.Close()
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return rc, nil
}

// explainOpen says in one line why a file could not be opened, keeping err
// for errors.Is.
func explainOpen(err error) error {
	switch {
	case errors.Is(err, os.ErrNotExist):
		return &explained{"no such file (check the path)", err}
	case errors.Is(err, os.ErrPermission):
		return &explained{"permission denied (check the file's mode, or run as a user who may read it)", err}
	case errors.Is(err, syscall.EISDIR):
		return &explained{"is a folder, not a file", err}
	}
	return err
}

// explainRead says what a read error of a (compressed) file means.
func explainRead(err error) error {
	var corrupt flate.CorruptInputError
	switch {
	case errors.Is(err, io.ErrUnexpectedEOF):
		return &explained{"compressed data ends early (the file is truncated)", err}
	case errors.Is(err, gzip.ErrChecksum), errors.Is(err, gzip.ErrHeader), errors.As(err, &corrupt):
		return &explained{"gzip data is corrupt: " + strings.TrimPrefix(err.Error(), "gzip: "), err}
	case errors.Is(err, syscall.EISDIR):
		return &explained{"is a folder, not a file", err}
	}
	return err
}

// zstdReader names the faults of zstd data as such: the decoder's errors
// do not say where they come from.
type zstdReader struct{ r io.Reader }

func (z zstdReader) Read(p []byte) (int, error) {
	n, err := z.r.Read(p)
	if err != nil && err != io.EOF && !errors.Is(err, io.ErrUnexpectedEOF) {
		err = &explained{"zstd data is corrupt: " + strings.TrimPrefix(err.Error(), "zstd: "), err}
	}
	return n, err
}

// explained is an error with a message for the user that still unwraps to
// its cause.
type explained struct {
	msg string
	err error
}

func (e *explained) Error() string { return e.msg }
func (e *explained) Unwrap() error { return e.err }

type readCloser struct {
	io.Reader
	close func() error
}

func (r readCloser) Close() error { return r.close() }

// Decompress wraps rc in a gzip or zstd reader when its first bytes say so.
func Decompress(rc io.ReadCloser) (io.ReadCloser, error) {
	return decompress(bufio.NewReaderSize(rc, 256<<10), rc.Close)
}

// decompress reads br, decompressing it when its first bytes say so, and
// closes with closeFn. The caller may ask br how much it holds unread, to
// tell where in the stored file a fault is.
func decompress(br *bufio.Reader, closeFn func() error) (io.ReadCloser, error) {
	magic, _ := br.Peek(4)
	switch {
	case len(magic) >= 2 && magic[0] == 0x1f && magic[1] == 0x8b:
		zr, err := gzip.NewReader(br)
		if err != nil {
			return nil, explainRead(err)
		}
		return readCloser{zr, func() error { zr.Close(); return closeFn() }}, nil
	case len(magic) == 4 && bytes.Equal(magic, []byte{0x28, 0xb5, 0x2f, 0xfd}):
		zr, err := zstd.NewReader(br, zstd.WithDecoderConcurrency(1))
		if err != nil {
			return nil, explainRead(err)
		}
		return readCloser{zstdReader{zr}, func() error { zr.Close(); return closeFn() }}, nil
	}
	return readCloser{br, closeFn}, nil
}

// Lines splits a stream into lines, numbered from 1, without their line
// endings (LF or CRLF). A last line without a newline is still a line.
// Next gives one line at a time; AppendBlock many, in a caller's buffer
// (lines_block.go). The two may be mixed.
type Lines struct {
	r       *bufio.Reader
	max     int
	n       int64
	buf     []byte
	Partial bool // the last line returned had no newline

	// Left by AppendBlock: bytes read past the block's last line (carry),
	// and a line over the limit whose start was dropped (skipping).
	carry    []byte
	skipping bool
	pending  error // a read's error that came with data, not yet given
	// What AppendBlock has taken, to size its reads.
	blockBytes, blockLines int64
}

// NewLines reads lines of at most max bytes from r (max <= 0: DefaultMaxLine).
func NewLines(r io.Reader, max int) *Lines {
	if max <= 0 {
		max = DefaultMaxLine
	}
	return &Lines{r: bufio.NewReaderSize(r, 64<<10), max: max}
}

// Next returns the next line and its number. The slice is valid until the
// next call. At the end it returns io.EOF; a read error is returned as is,
// after every line before it.
func (l *Lines) Next() ([]byte, int64, error) {
	l.buf = l.buf[:0]
	tooLong := l.skipping
	l.skipping = false
	if len(l.carry) > 0 || l.pending != nil {
		// AppendBlock read ahead: those bytes (and the error after them)
		// come first.
		rs := []io.Reader{bytes.NewReader(bytes.Clone(l.carry))}
		if l.pending != nil && !errors.Is(l.pending, io.EOF) {
			rs = append(rs, &onceErr{l.pending})
		}
		l.carry, l.pending = l.carry[:0], nil
		l.r = bufio.NewReaderSize(io.MultiReader(append(rs, l.r)...), 64<<10)
	}
	for {
		chunk, err := l.r.ReadSlice('\n')
		if !tooLong {
			if len(l.buf)+len(chunk) > l.max+2 { // +2: the line ending
				tooLong = true
				l.buf = l.buf[:0]
			} else if err == nil && len(l.buf) == 0 {
				// The common case: the whole line is in bufio's buffer.
				l.n++
				l.Partial = false
				return lineText(chunk), l.n, l.check(chunk)
			} else {
				l.buf = append(l.buf, chunk...)
			}
		}
		switch {
		case err == nil:
			l.n++
			l.Partial = false
			if tooLong {
				return nil, l.n, ErrLineTooLong
			}
			return lineText(l.buf), l.n, l.check(l.buf)
		case errors.Is(err, bufio.ErrBufferFull):
			continue
		case errors.Is(err, io.EOF):
			if len(l.buf) == 0 && !tooLong {
				return nil, l.n, io.EOF
			}
			l.n++
			l.Partial = true
			if tooLong {
				return nil, l.n, ErrLineTooLong
			}
			return lineText(l.buf), l.n, l.check(l.buf)
		default:
			if len(l.buf) > 0 && !tooLong {
				// Keep what came before the fault as a (partial) line.
				l.n++
				l.Partial = true
				return lineText(l.buf), l.n, nil
			}
			return nil, l.n, err
		}
	}
}

// onceErr gives its error once, then io.EOF.
type onceErr struct{ err error }

func (o *onceErr) Read([]byte) (int, error) {
	err := o.err
	if err == nil {
		return 0, io.EOF
	}
	o.err = nil
	return 0, err
}

func (l *Lines) check(line []byte) error {
	if len(trimEOL(line)) > l.max {
		return ErrLineTooLong
	}
	return nil
}

func trimEOL(b []byte) []byte {
	if n := len(b); n > 0 && b[n-1] == '\n' {
		b = b[:n-1]
		if n := len(b); n > 0 && b[n-1] == '\r' {
			b = b[:n-1]
		}
	}
	return b
}

// lineText is line b as given: without its line ending and without a
// leading byte order mark (bomLen). The length limit counts the mark.
func lineText(b []byte) []byte {
	b = trimEOL(b)
	return b[bomLen(b):]
}

// bomLen is 3 when line b begins with a UTF-8 byte order mark, else 0.
// Editors and Windows tools write one at the start of a file, and files
// joined with cat carry theirs to the start of a line inside the stream;
// left in, it made the line unreadable (a JSON object that does not start
// with '{'). U+FEFF has no meaning at the start of a log line, so it is
// dropped wherever a line begins with it.
func bomLen(b []byte) int {
	if len(b) >= 3 && b[0] == 0xEF && b[1] == 0xBB && b[2] == 0xBF {
		return 3
	}
	return 0
}
