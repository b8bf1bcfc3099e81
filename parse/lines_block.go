package parse

import (
	"bytes"
	"errors"
	"io"
	"slices"
)

// Reading lines a block at a time. Next copies each line out of bufio's
// buffer and costs a few calls per line; a reader that hands lines on in
// batches (the ingest pipeline) spent about a tenth of a report's CPU
// there. AppendBlock reads straight into the caller's buffer, large reads
// at a time, and finds the lines where they lie: the text is not copied
// again, and the per-line work is one IndexByte and a span. It gives the
// same lines as Next, with the same numbers, the same limit (--max-line),
// CRLF, partial last line and faults (TestAppendBlockMatchesNext).

// BlockLine is one line of a block read by AppendBlock: its text is
// block[Start:End], without its line ending.
type BlockLine struct {
	Start, End int
	Num        int64
	// TooLong: the line was over the limit; Start == End, and the line is
	// to be counted as rejected.
	TooLong bool
}

// BlockRoom is how many lines a block may still take. A line is taken
// while Lines < MaxLines and Text plus its length is at most MaxText; a
// block's first line (Lines == 0) always is. AppendBlock counts the lines
// it takes in Lines and Text.
type BlockRoom struct {
	Lines, Text       int // in the block so far; Text: bytes of line text, without endings
	MaxLines, MaxText int
}

// blockReadMin and blockReadMax bound one read of AppendBlock.
const (
	blockReadMin = 64 << 10
	blockReadMax = 4 << 20
)

// AppendBlock reads lines into block (appended: earlier contents stay) and
// appends their places to lines, while room allows. full says that it
// stopped at a line room had no place for; the line is kept for the next
// call. err is io.EOF at the end of the stream, or a read error, after the
// lines appended; a line cut short by a read error is given (as Next gives
// it) and the error comes on the next call. Lines past the block's last
// may have been read: they come first in the next AppendBlock or Next.
func (l *Lines) AppendBlock(block []byte, lines []BlockLine, room *BlockRoom) (out []byte, _ []BlockLine, full bool, err error) {
	p := len(block) // start of the first line not yet taken
	block = append(block, l.carry...)
	l.carry = l.carry[:0]
	scan := p // bytes before scan hold no newline after p
	defer func() {
		// Keep what was read past the last line taken.
		l.carry = append(l.carry, out[p:]...)
		out = out[:p]
	}()
	for {
		if i := bytes.IndexByte(block[scan:], '\n'); i >= 0 {
			nl := scan + i
			scan = nl + 1
			end := nl
			if end > p && block[end-1] == '\r' {
				end--
			}
			tooLong := l.skipping || end-p > l.max
			if tooLong {
				end = p
			}
			start := p + bomLen(block[p:end])
			if !room.take(end - start) {
				return block, lines, true, nil
			}
			l.skipping = false
			l.n++
			l.Partial = false
			l.blockLines++
			l.blockBytes += int64(scan - p)
			lines = append(lines, BlockLine{Start: start, End: end, Num: l.n, TooLong: tooLong})
			p = scan
			continue
		}
		scan = len(block)
		if !l.skipping && len(block)-p > l.max+2 { // +2: the line ending
			// Over the limit whatever follows: drop it in bounded memory.
			l.skipping = true
		}
		if l.skipping {
			block = block[:p]
			scan = p
		}
		// Read more: about what the rest of the block needs, judged from
		// the lines taken so far, but never less than blockReadMin.
		var rerr error
		if l.pending != nil {
			rerr, l.pending = l.pending, nil
		} else {
			want := blockReadMin
			if l.blockLines > 0 && room.MaxLines > room.Lines {
				avg := int(l.blockBytes/l.blockLines) + 1
				need := min((room.MaxLines-room.Lines+1)*avg, room.MaxText-room.Text+2*avg)
				want = max(want, min(need, blockReadMax))
			}
			block = slices.Grow(block, want)
			var n int
			n, rerr = l.r.Read(block[len(block) : len(block)+want])
			block = block[:len(block)+n]
			if n > 0 {
				// A reader may give data and an error at once: the
				// data first.
				l.pending = rerr
				continue
			}
			if rerr == nil {
				continue
			}
		}
		if errors.Is(rerr, io.EOF) {
			if len(block) == p && !l.skipping {
				return block, lines, false, io.EOF
			}
			// A last line without a newline.
			end := len(block)
			tooLong := l.skipping || end-p > l.max
			if tooLong {
				end = p
			}
			start := p + bomLen(block[p:end])
			if !room.take(end - start) {
				l.pending = rerr
				return block, lines, true, nil
			}
			l.skipping = false
			l.n++
			l.Partial = true
			lines = append(lines, BlockLine{Start: start, End: end, Num: l.n, TooLong: tooLong})
			p = len(block)
			return block, lines, false, io.EOF
		}
		if len(block) > p && !l.skipping {
			// Keep what came before the fault as a (partial) line,
			// unchecked, as Next does; the read is tried again next time.
			l.n++
			l.Partial = true
			start := p + bomLen(block[p:])
			lines = append(lines, BlockLine{Start: start, End: len(block), Num: l.n})
			room.Lines++
			room.Text += len(block) - start
			p = len(block)
			return block, lines, false, nil
		}
		l.skipping = false
		block = block[:p]
		return block, lines, false, rerr
	}
}

// take counts a line of n bytes of text if there is room for it.
func (r *BlockRoom) take(n int) bool {
	if r.Lines > 0 && (r.Lines >= r.MaxLines || r.Text+n > r.MaxText) {
		return false
	}
	r.Lines++
	r.Text += n
	return true
}
