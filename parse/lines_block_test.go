package parse

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math/rand/v2"
	"strings"
	"testing"
)

// pieceReader gives data in pieces of random length, then io.EOF, or fails
// with failErr once failAt bytes have been given (with the last piece, or
// on the next call, by the toss of a coin), and on every call after.
type pieceReader struct {
	data     []byte
	off      int
	rnd      *rand.Rand
	maxPiece int
	failAt   int // -1: no fault
	failErr  error
	withData bool // the error comes with the last data
	once     bool // the fault is given once, then the data goes on
}

func (r *pieceReader) fail() error {
	if r.once {
		r.failAt = -1
	}
	return r.failErr
}

func (r *pieceReader) Read(p []byte) (int, error) {
	end := len(r.data)
	if r.failAt >= 0 {
		end = r.failAt
	}
	if r.off >= end {
		if r.failAt >= 0 {
			return 0, r.fail()
		}
		return 0, io.EOF
	}
	n := min(len(p), 1+r.rnd.IntN(r.maxPiece), end-r.off)
	copy(p, r.data[r.off:r.off+n])
	r.off += n
	if r.off == end && r.withData {
		if r.failAt >= 0 {
			return n, r.fail()
		}
		return n, io.EOF
	}
	return n, nil
}

// readAllNext lists the lines Next gives, "#num:text", "#num:TOO-LONG",
// then "EOF" or "FAULT: ...".
func readAllNext(l *Lines) []string {
	var got []string
	for {
		d, end := describeNext(l.Next())
		if got = append(got, d); end {
			return got
		}
	}
}

// describeNext is one result of Next as readAllNext lists it, and whether
// it ends the reading.
func describeNext(text []byte, num int64, err error) (string, bool) {
	switch {
	case err == nil:
		return fmt.Sprintf("#%d:%q", num, text), false
	case errors.Is(err, ErrLineTooLong):
		return fmt.Sprintf("#%d:TOO-LONG", num), false
	case errors.Is(err, io.EOF):
		return "EOF", true
	}
	return "FAULT: " + err.Error(), true
}

// readAllBlocks lists the same from AppendBlock, with rooms of random size
// and, now and then, a line taken by Next between blocks.
func readAllBlocks(l *Lines, rnd *rand.Rand) []string {
	var got []string
	var block []byte
	var lines []BlockLine
	for {
		if rnd.IntN(8) == 0 {
			d, end := describeNext(l.Next())
			if got = append(got, d); end {
				return got
			}
			continue
		}
		// A block that already holds text, as a batch filled from
		// several files does.
		block = append(block[:0], "prefix"...)
		room := &BlockRoom{MaxLines: 1 + rnd.IntN(6), MaxText: rnd.IntN(40)}
		var full bool
		var err error
		block, lines, full, err = l.AppendBlock(block, lines[:0], room)
		text := 0
		for _, bl := range lines {
			if bl.TooLong {
				if bl.Start != bl.End {
					got = append(got, "a too-long line with text")
				}
				got = append(got, fmt.Sprintf("#%d:TOO-LONG", bl.Num))
				continue
			}
			text += bl.End - bl.Start
			got = append(got, fmt.Sprintf("#%d:%q", bl.Num, block[bl.Start:bl.End]))
		}
		if room.Lines != len(lines) || room.Text != text {
			got = append(got, fmt.Sprintf("room counts %d lines %d bytes, the block %d, %d", room.Lines, room.Text, len(lines), text))
		}
		if full && len(lines) == 0 {
			got = append(got, "full without a line")
		}
		switch {
		case err == nil:
		case errors.Is(err, io.EOF):
			return append(got, "EOF")
		default:
			return append(got, "FAULT: "+err.Error())
		}
	}
}

// TestAppendBlockMatchesNext: AppendBlock gives the lines Next gives, with
// the same numbers, the same too-long lines, CRLF, partial last lines and
// faults, whatever the rooms and the reader's pieces, mixed with Next.
func TestAppendBlockMatchesNext(t *testing.T) {
	rnd := rand.New(rand.NewPCG(1, 2))
	pieces := []string{"a", "bb", "", "x\r", "\r", "ccc dd", "éé", strings.Repeat("L", 30), strings.Repeat("M", 11), "\x00z", "\ufeff"}
	for trial := 0; trial < 4000; trial++ {
		var b strings.Builder
		for n := rnd.IntN(12); n > 0; n-- {
			for k := rnd.IntN(3); k >= 0; k-- {
				b.WriteString(pieces[rnd.IntN(len(pieces))])
			}
			if rnd.IntN(5) == 0 {
				b.WriteString("\r\n")
			} else {
				b.WriteString("\n")
			}
		}
		if rnd.IntN(3) == 0 {
			b.WriteString(pieces[rnd.IntN(len(pieces))]) // no newline at the end
		}
		data := []byte(b.String())
		maxLine := 1 + rnd.IntN(14)
		failAt, withData := -1, rnd.IntN(2) == 0
		if rnd.IntN(3) == 0 {
			failAt = rnd.IntN(len(data) + 1)
		}
		seed := rnd.Uint64()
		reader := func() io.Reader {
			return &pieceReader{data: data, rnd: rand.New(rand.NewPCG(seed, 9)), maxPiece: 1 + int(seed%20),
				failAt: failAt, failErr: errors.New("disk on fire"), withData: withData, once: seed%3 == 0}
		}
		want := readAllNext(NewLines(reader(), maxLine))
		got := readAllBlocks(NewLines(reader(), maxLine), rand.New(rand.NewPCG(seed, 3)))
		if strings.Join(got, "\n") != strings.Join(want, "\n") {
			t.Fatalf("input %q, max %d, fault at %d (with data %v):\nblocks: %q\nnext:   %q", data, maxLine, failAt, withData, got, want)
		}
	}
}

// TestAppendBlockLongLines: lines far over the limit are dropped in
// bounded memory and counted; the block does not grow with them.
func TestAppendBlockLongLines(t *testing.T) {
	long := bytes.Repeat([]byte("x"), 5<<20)
	in := "short\n" + string(long) + "\nafter\n" + string(long)
	l := NewLines(strings.NewReader(in), 1000)
	var block []byte
	var lines []BlockLine
	room := &BlockRoom{MaxLines: 100, MaxText: 1 << 20}
	var err error
	for err == nil {
		block, lines, _, err = l.AppendBlock(block, lines, room)
	}
	if !errors.Is(err, io.EOF) || len(lines) != 4 || !lines[1].TooLong || !lines[3].TooLong ||
		string(block[lines[2].Start:lines[2].End]) != "after" || lines[3].Num != 4 {
		t.Fatalf("%v, lines %+v", err, lines)
	}
	if cap(block) > 3*blockReadMax {
		t.Errorf("the block grew to %d bytes", cap(block))
	}
}

// TestByteOrderMark: a UTF-8 byte order mark at the start of a line (of a
// file, or of a file joined to another with cat) is not part of the line,
// for Next, AppendBlock and a followed file's splitter alike; the length
// limit counts it. One in the middle of a line stays.
func TestByteOrderMark(t *testing.T) {
	in := "\ufeff{\"a\":1}\r\n{\"a\":2}\n\ufeff{\"a\":3}\nx\ufeffy\n\ufeff12345678\n\ufeff"
	want := []string{`#1:"{\"a\":1}"`, `#2:"{\"a\":2}"`, `#3:"{\"a\":3}"`, `#4:"x\ufeffy"`, "#5:TOO-LONG", `#6:""`, "EOF"}
	if got := readAllNext(NewLines(strings.NewReader(in), 10)); strings.Join(got, "|") != strings.Join(want, "|") {
		t.Errorf("Next: %q, want %q", got, want)
	}
	if got := readAllBlocks(NewLines(strings.NewReader(in), 10), rand.New(rand.NewPCG(1, 1))); strings.Join(got, "|") != strings.Join(want, "|") {
		t.Errorf("AppendBlock: %q, want %q", got, want)
	}
	s := newSplitter(10)
	s.buf = append(s.buf, in...)
	var got []string
	for {
		text, tooLong, ok := s.line()
		if !ok {
			break
		}
		if tooLong {
			got = append(got, "TOO-LONG")
			continue
		}
		got = append(got, string(text))
	}
	if text, _, ok := s.rest(); ok {
		got = append(got, "rest:"+string(text))
	}
	wantSplit := []string{"{\"a\":1}", "{\"a\":2}", "{\"a\":3}", "x\ufeffy", "TOO-LONG", "rest:"}
	if strings.Join(got, "|") != strings.Join(wantSplit, "|") {
		t.Errorf("splitter: %q, want %q", got, wantSplit)
	}
}
