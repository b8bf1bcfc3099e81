package parse

import (
	"bytes"
	"errors"
	"io"
	"os"
)

// SpreadSample returns up to n lines taken from chunks spread evenly over
// the plain file at path (a compressed file, a pipe or a small file gives
// its first lines instead), so that a format and the companions are chosen
// from the whole file rather than from its first lines only. Each chunk's
// first, partial line is dropped; blank lines are skipped. Errors give no
// sample: the caller reads the file as usual and meets them there.
func SpreadSample(path string, n int) [][]byte {
	const chunks, chunkBytes = 16, 32 << 10
	if path == "-" || n <= 0 {
		return nil
	}
	// Only regular files: opening a FIFO waits for a writer (and would
	// take data from it), a device may never end.
	if fi, err := os.Stat(path); err != nil || !fi.Mode().IsRegular() {
		return nil
	}
	f, err := os.Open(path)
	if err != nil {
		return nil
	}
	defer f.Close()
	fi, err := f.Stat()
	if err != nil || !fi.Mode().IsRegular() {
		return nil
	}
	var magic [4]byte
	if k, _ := io.ReadFull(f, magic[:]); k >= 2 && (magic[0] == 0x1f && magic[1] == 0x8b || k == 4 && magic == [4]byte{0x28, 0xb5, 0x2f, 0xfd}) {
		return firstLines(path, n) // compressed: no seeking
	}
	size := fi.Size()
	if size <= chunks*chunkBytes {
		return firstLines(path, n)
	}
	per := (n + chunks - 1) / chunks
	var out [][]byte
	buf := make([]byte, chunkBytes)
	for c := 0; c < chunks; c++ {
		off := size / chunks * int64(c)
		k, _ := f.ReadAt(buf, off)
		b := buf[:k]
		if c > 0 {
			if i := bytes.IndexByte(b, '\n'); i >= 0 {
				b = b[i+1:]
			} else {
				continue
			}
		}
		taken := 0
		for taken < per && len(b) > 0 {
			i := bytes.IndexByte(b, '\n')
			if i < 0 {
				break // a partial last line
			}
			l := bytes.TrimRight(b[:i], "\r")
			b = b[i+1:]
			if len(bytes.TrimSpace(l)) == 0 || len(l) > DefaultMaxLine {
				continue
			}
			out = append(out, bytes.Clone(l))
			taken++
		}
	}
	return out
}

// firstLines returns the first n non-blank lines of path, decompressed.
func firstLines(path string, n int) [][]byte {
	rc, err := Open(path)
	if err != nil {
		return nil
	}
	defer rc.Close()
	var out [][]byte
	ls := NewLines(rc, DefaultMaxLine)
	for len(out) < n {
		l, _, err := ls.Next()
		if errors.Is(err, ErrLineTooLong) {
			continue
		}
		if err != nil {
			break
		}
		if len(bytes.TrimSpace(l)) == 0 {
			continue
		}
		out = append(out, bytes.Clone(l))
	}
	return out
}
