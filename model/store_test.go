package model

import (
	"math/rand/v2"
	"slices"
	"testing"
)

// TestStoreAgainstSlice drives the block store and a plain slice of rows
// with the same pushes and pops: ids of every width (overflow included),
// rows of growing width, line numbers that restart (a new file) and times
// that jump, across many blocks. Every row and meta must come back.
func TestStoreAgainstSlice(t *testing.T) {
	r := rand.New(rand.NewPCG(9, 9))
	var s store
	type rec struct {
		row  []uint32
		meta rowMeta
	}
	var ref []rec
	line, tm := int64(0), int64(0)
	width := 3
	for step := 0; step < 60000; step++ {
		if len(ref) > 0 && r.IntN(100) < 45 {
			s.pop()
			ref = ref[1:]
		} else {
			if r.IntN(5000) == 0 {
				width++
			}
			row := make([]uint32, r.IntN(width+1))
			for j := range row {
				switch r.IntN(6) {
				case 0:
					row[j] = absent
				case 1:
					row[j] = uint32(r.IntN(300))
				case 2:
					row[j] = uint32(r.IntN(70000))
				case 3:
					row[j] = overflow
				default:
					row[j] = uint32(r.IntN(200))
				}
			}
			line++
			if r.IntN(3000) == 0 {
				line = 1 // the next file
			}
			tm += int64(r.IntN(1000))
			if r.IntN(2000) == 0 {
				tm += 1 << 40
			}
			m := rowMeta{line: line, time: tm}
			s.push(row, m)
			ref = append(ref, rec{row, m})
		}
		if s.n != len(ref) {
			t.Fatalf("step %d: store holds %d rows, want %d", step, s.n, len(ref))
		}
		if step%97 == 0 {
			for i, want := range ref {
				got := s.row(i)
				full := make([]uint32, len(got))
				copy(full, want.row)
				if !slices.Equal(got, full) || s.metaAt(i) != want.meta {
					t.Fatalf("step %d row %d: %v %+v, want %v %+v", step, i, got, s.metaAt(i), full, want.meta)
				}
			}
			// The column accessor gives the same ids as the rows, over any
			// range, for every field (and past the widest: absent).
			lo := r.IntN(len(ref) + 1)
			hi := lo + r.IntN(len(ref)-lo+1)
			for j := 0; j <= width+1; j++ {
				col := s.column(j, lo, hi, nil)
				for i := lo; i < hi; i++ {
					if want := idAt(ref[i].row, j); col[i-lo] != want {
						t.Fatalf("step %d column %d row %d: %d, want %d", step, j, i, col[i-lo], want)
					}
				}
			}
		}
	}
	if len(s.blocks) > len(ref)/blockRows+2 {
		t.Errorf("%d blocks for %d rows", len(s.blocks), len(ref))
	}
}
