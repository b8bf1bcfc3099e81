package parse

import (
	"bytes"
	"io"
	"os"
	"time"
)

// tailKeep is how many of the last bytes read a followed file remembers,
// to notice that it was truncated and rewritten past the offset between two
// looks (copytruncate followed by a burst of writes).
const tailKeep = 32

// headKeep is how many of a file's first bytes a followed file remembers:
// with the last bytes read, a fingerprint of what was read that a
// truncation and rewrite changes even when the new text happens to end at
// the old offset with the same bytes.
const headKeep = 64

// followFile is one file being followed: the file that carries the path's
// name, or an older one being drained after a rotation.
//
// Invariant: off is the number of bytes read from f since it was last
// (re)started, and tail[:tailN] are the last tailN of them.
type followFile struct {
	f     *os.File
	fi    os.FileInfo // identity, for os.SameFile
	off   int64
	tail  [tailKeep]byte
	tailN int
	head  [headKeep]byte
	headN int
	split splitter
	num   int64 // lines returned from this file

	// lastData is when data last came (or when the file became current):
	// a superseded file is done once it has been quiet for the grace.
	lastData time.Time
	// superseded: the path no longer names this file.
	superseded bool
}

func openFollowFile(path string, maxLine int, now time.Time) (*followFile, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	fi, err := f.Stat()
	if err != nil {
		f.Close()
		return nil, err
	}
	return &followFile{f: f, fi: fi, split: newSplitter(maxLine), lastData: now}, nil
}

// seek starts reading at off.
func (c *followFile) seek(off int64) error {
	if _, err := c.f.Seek(off, io.SeekStart); err != nil {
		return err
	}
	c.off, c.tailN, c.headN = off, 0, 0
	c.split.reset()
	if off > 0 {
		if m, err := c.f.ReadAt(c.head[:min(off, headKeep)], 0); err == nil || m > 0 {
			c.headN = m
		}
		n := int64(tailKeep)
		if off < n {
			n = off
		}
		if m, err := c.f.ReadAt(c.tail[:n], off-n); err == nil || m == int(n) {
			c.tailN = m
		}
	}
	return nil
}

// read reads once, remembering the last bytes read.
func (c *followFile) read(now time.Time) (int, error) {
	n, err := c.split.fill(c.f)
	if n > 0 {
		c.off += int64(n)
		c.lastData = now
		got := c.split.buf[len(c.split.buf)-n:]
		if from := c.off - int64(n); c.headN < headKeep && from == int64(c.headN) {
			c.headN += copy(c.head[c.headN:], got)
		}
		if len(got) >= tailKeep {
			c.tailN = copy(c.tail[:], got[len(got)-tailKeep:])
		} else {
			keep := min(c.tailN, tailKeep-len(got))
			copy(c.tail[:], c.tail[c.tailN-keep:c.tailN])
			c.tailN = keep + copy(c.tail[keep:], got)
		}
	}
	return n, err
}

// rewritten says whether the bytes before off are no longer those read: the
// file was truncated and written past off again since the last look.
// The follower asks at every look, before it reads on, so a file truncated
// and written past the old offset meanwhile is read again from its start
// instead of from the middle of its new text.
func (c *followFile) rewritten() bool {
	var b [headKeep]byte
	if c.headN > 0 {
		m, _ := c.f.ReadAt(b[:c.headN], 0)
		if m != c.headN || !bytes.Equal(b[:m], c.head[:c.headN]) {
			return true
		}
	}
	if c.tailN == 0 {
		return false
	}
	m, _ := c.f.ReadAt(b[:c.tailN], c.off-int64(c.tailN))
	return m != c.tailN || !bytes.Equal(b[:m], c.tail[:c.tailN])
}

func (c *followFile) close() { c.f.Close() }

// startOffset is where following begins in a file of the given size: after
// the last newline (so a half-written last line is read whole), then back
// lines more lines.
// lineCountMax is the most bytes countLines reads before a followed
// file's start: 256 MB is about a tenth of a second from the page cache
// (and a second or two from a cold disk) before the first line shows.
var lineCountMax int64 = 256 << 20

// countLines counts the newlines in f's first off bytes, if off is at most
// max (ok false otherwise, nothing read).
func countLines(f *os.File, off, max int64) (n int64, ok bool, err error) {
	if off > max {
		return 0, false, nil
	}
	buf := make([]byte, min(off, 1<<20))
	for pos := int64(0); pos < off; {
		k := min(int64(len(buf)), off-pos)
		m, err := f.ReadAt(buf[:k], pos)
		n += int64(bytes.Count(buf[:m], []byte{'\n'}))
		if err != nil && !(err == io.EOF && int64(m) == k) {
			return 0, false, err
		}
		pos += int64(m)
	}
	return n, true, nil
}

func startOffset(f *os.File, size int64, lines int) (int64, error) {
	const block = 64 << 10
	buf := make([]byte, block)
	pos := size
	found := -1 // newlines found; the first marks the end of the last full line
	for pos > 0 {
		n := int64(block)
		if pos < n {
			n = pos
		}
		pos -= n
		if _, err := f.ReadAt(buf[:n], pos); err != nil && err != io.EOF {
			return 0, err
		}
		for i := n - 1; i >= 0; i-- {
			if buf[i] != '\n' {
				continue
			}
			found++
			if found == lines {
				return pos + i + 1, nil
			}
		}
	}
	return 0, nil
}
