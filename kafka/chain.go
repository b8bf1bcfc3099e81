package kafka

import (
	"fmt"
	"sort"
)

// Span is the offset range [From, To) of one partition that one profile
// counts.
type Span struct {
	Topic     string
	Partition int32
	From, To  int64
	// Index is the caller's: which profile this is.
	Index int
}

func (s Span) String() string {
	return fmt.Sprintf("%s/%d offsets %d–%d", s.Topic, s.Partition, s.From, s.To)
}

// Gap is a range of a partition's offsets that no profile counts: missing
// data, unless the topic never held records there (compaction, deleted
// records, transaction markers are offsets with no record).
type Gap struct {
	Topic     string
	Partition int32
	From, To  int64
}

func (g Gap) String() string {
	return fmt.Sprintf("%s/%d offsets %d–%d (%d offsets) counted by no profile", g.Topic, g.Partition, g.From, g.To-1, g.To-g.From)
}

// Chain is what Chains makes of a set of spans.
type Chain struct {
	// Use are the spans to add, in topic, partition and offset order:
	// together they cover each partition once, without overlap.
	Use []Span
	// Repeats are spans left out because the chain counts their records
	// already: a worker that wrote a profile and died before committing
	// its offsets, so that the next owner read the same records again.
	Repeats []Span
	// Overlaps are spans left out because they cover part of what the
	// chain counts and part of what it does not: a count table cannot be
	// split, so their records outside the chain are among the gaps.
	Overlaps []Span
	// Gaps are ranges between the chain's links that no chosen span
	// covers.
	Gaps []Gap
	// Covered is, per partition, [first offset, end offset) of its chain.
	Covered []Gap
}

// Chains links each partition's spans by offset: from the lowest offset,
// each link is a span that begins where the one before ends. Where several
// spans begin at the same offset (the same records read twice, cut at
// different places), the one whose chain reaches furthest is taken and the
// others are repeats; where none begins at the chain's end, the offsets up
// to the next span's start are a gap.
func Chains(spans []Span) Chain {
	type key struct {
		topic string
		part  int32
	}
	by := map[key][]Span{}
	var keys []key
	for _, s := range spans {
		k := key{s.Topic, s.Partition}
		if _, ok := by[k]; !ok {
			keys = append(keys, k)
		}
		by[k] = append(by[k], s)
	}
	sort.Slice(keys, func(i, j int) bool {
		if keys[i].topic != keys[j].topic {
			return keys[i].topic < keys[j].topic
		}
		return keys[i].part < keys[j].part
	})
	var c Chain
	for _, k := range keys {
		c.link(by[k])
	}
	return c
}

// link chains one partition's spans.
func (c *Chain) link(ss []Span) {
	sort.Slice(ss, func(i, j int) bool {
		if ss[i].From != ss[j].From {
			return ss[i].From < ss[j].From
		}
		return ss[i].To > ss[j].To
	})
	starts := map[int64][]int{} // From → indexes of ss
	for i, s := range ss {
		if s.To > s.From {
			starts[s.From] = append(starts[s.From], i)
		}
	}
	// reach[o] is the furthest end a chain of links from offset o gets to.
	reach := map[int64]int64{}
	var far func(o int64) int64
	far = func(o int64) int64 {
		if r, ok := reach[o]; ok {
			return r
		}
		reach[o] = o // a cycle cannot happen (To > From), but be safe
		best := o
		for _, i := range starts[o] {
			best = max(best, far(ss[i].To))
		}
		reach[o] = best
		return best
	}
	used := make([]bool, len(ss))
	pos, first := ss[0].From, ss[0].From
	for {
		var pick = -1
		for _, i := range starts[pos] {
			if pick < 0 || far(ss[i].To) > far(ss[pick].To) ||
				(far(ss[i].To) == far(ss[pick].To) && ss[i].To > ss[pick].To) {
				pick = i
			}
		}
		if pick >= 0 {
			used[pick] = true
			c.Use = append(c.Use, ss[pick])
			pos = ss[pick].To
			continue
		}
		// No span begins here: the next one that begins later.
		next := int64(-1)
		for _, s := range ss {
			if s.From > pos && s.To > s.From && (next < 0 || s.From < next) {
				next = s.From
			}
		}
		if next < 0 {
			break
		}
		c.Gaps = append(c.Gaps, Gap{ss[0].Topic, ss[0].Partition, pos, next})
		pos = next
	}
	c.Covered = append(c.Covered, Gap{ss[0].Topic, ss[0].Partition, first, pos})
	// What was left out: inside the chosen links, a repeat; across a
	// link's end into a gap (or past the end), an overlap.
	for i, s := range ss {
		if used[i] {
			continue
		}
		if c.inside(s) {
			c.Repeats = append(c.Repeats, s)
		} else {
			c.Overlaps = append(c.Overlaps, s)
		}
	}
}

// inside says whether the chosen links of s's partition cover all of s.
func (c *Chain) inside(s Span) bool {
	pos := s.From
	for _, u := range c.Use {
		if u.Topic != s.Topic || u.Partition != s.Partition || u.To <= pos || u.From > pos {
			continue
		}
		pos = u.To
		if pos >= s.To {
			return true
		}
	}
	// c.Use is in offset order per partition, so one pass may miss a link
	// only when links are out of order, which link never makes.
	return s.From >= s.To
}
