package kafka

import (
	"fmt"
	"testing"
)

func TestChains(t *testing.T) {
	sp := func(p int32, from, to int64) Span { return Span{Topic: "t", Partition: p, From: from, To: to} }
	for _, tc := range []struct {
		name                         string
		spans                        []Span
		use, repeats, overlaps, gaps string
	}{
		{"a clean chain", []Span{sp(0, 100, 200), sp(0, 0, 100), sp(0, 200, 250)},
			"[t/0 offsets 0–100 t/0 offsets 100–200 t/0 offsets 200–250]", "[]", "[]", "[]"},
		{"the same range twice (died before committing)", []Span{sp(0, 0, 100), sp(0, 0, 100), sp(0, 100, 150)},
			"[t/0 offsets 0–100 t/0 offsets 100–150]", "[t/0 offsets 0–100]", "[]", "[]"},
		// The second owner cut the re-read records elsewhere: the chain
		// that reaches furthest wins, the dead end is a repeat.
		{"a re-read cut elsewhere", []Span{sp(0, 0, 120), sp(0, 0, 80), sp(0, 80, 300)},
			"[t/0 offsets 0–80 t/0 offsets 80–300]", "[t/0 offsets 0–120]", "[]", "[]"},
		{"a gap", []Span{sp(1, 0, 50), sp(1, 80, 90)},
			"[t/1 offsets 0–50 t/1 offsets 80–90]", "[]", "[]", "[t/1 offsets 50–79 (30 offsets) counted by no profile]"},
		{"an overlap into a gap", []Span{sp(2, 0, 50), sp(2, 40, 70), sp(2, 90, 100)},
			"[t/2 offsets 0–50 t/2 offsets 90–100]", "[]", "[t/2 offsets 40–70]", "[t/2 offsets 50–89 (40 offsets) counted by no profile]"},
		{"partitions apart", []Span{sp(1, 5, 6), sp(0, 7, 9)},
			"[t/0 offsets 7–9 t/1 offsets 5–6]", "[]", "[]", "[]"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := Chains(tc.spans)
			for _, x := range []struct{ got, want string }{
				{fmt.Sprint(c.Use), tc.use}, {fmt.Sprint(c.Repeats), tc.repeats},
				{fmt.Sprint(c.Overlaps), tc.overlaps}, {fmt.Sprint(c.Gaps), tc.gaps},
			} {
				if x.got != x.want {
					t.Errorf("got %s, want %s", x.got, x.want)
				}
			}
		})
	}
}
