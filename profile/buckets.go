package profile

import (
	"sort"
	"time"
)

// Buckets count records per time bucket: Records[i] records have a time t
// with Start[i] ≤ t < Start[i]+Width (Unix ns; Start a multiple of Width).
// They say when the records of a profile came, which a profile's single
// count table cannot: "the last N records" means nothing for shards read
// apart, so windows over profiles are chosen by time (see Merge's Since
// and Until), and the buckets show the rate over the span.
type Buckets struct {
	Width   int64   `json:"width_ns"`
	Start   []int64 `json:"start_ns"`
	Records []int64 `json:"records"`
}

// bucketWidths are the widths bucket tables use, each a multiple of the one
// before, so that any two tables can be brought to the coarser width.
var bucketWidths = []time.Duration{time.Second, 10 * time.Second, time.Minute, 10 * time.Minute,
	time.Hour, 6 * time.Hour, 24 * time.Hour, 7 * 24 * time.Hour}

// maxBuckets bounds a table's length: the width grows until the span fits.
const maxBuckets = 4096

// NewBuckets counts times (Unix ns; 0 means unknown and is left out) in
// buckets of the finest width that keeps the table within maxBuckets.
func NewBuckets(times []int64) *Buckets {
	lo, hi := int64(0), int64(0)
	for _, t := range times {
		if t == 0 {
			continue
		}
		if lo == 0 || t < lo {
			lo = t
		}
		if t > hi {
			hi = t
		}
	}
	if lo == 0 {
		return nil
	}
	w := BucketWidth(lo, hi)
	counts := map[int64]int64{}
	for _, t := range times {
		if t != 0 {
			counts[floorTo(t, w)]++
		}
	}
	return fromMap(w, counts)
}

// BucketWidth is the finest bucket width (ns) that keeps the span lo..hi
// within maxBuckets buckets.
func BucketWidth(lo, hi int64) int64 {
	for _, d := range bucketWidths {
		if (hi-lo)/int64(d) < maxBuckets {
			return int64(d)
		}
	}
	return int64(bucketWidths[len(bucketWidths)-1])
}

// BucketsOf makes a table from counts by bucket start (multiples of w).
func BucketsOf(w int64, counts map[int64]int64) *Buckets {
	if len(counts) == 0 {
		return nil
	}
	return fromMap(w, counts)
}

func floorTo(t, w int64) int64 {
	q := t / w * w
	if q > t {
		q -= w
	}
	return q
}

func fromMap(w int64, counts map[int64]int64) *Buckets {
	b := &Buckets{Width: w}
	for s := range counts {
		b.Start = append(b.Start, s)
	}
	sort.Slice(b.Start, func(i, j int) bool { return b.Start[i] < b.Start[j] })
	for _, s := range b.Start {
		b.Records = append(b.Records, counts[s])
	}
	return b
}

// AddBuckets adds bucket tables at the coarsest width among them (nil
// tables are skipped).
func AddBuckets(tables ...*Buckets) *Buckets {
	w := int64(0)
	for _, b := range tables {
		if b != nil && b.Width > w {
			w = b.Width
		}
	}
	if w == 0 {
		return nil
	}
	counts := map[int64]int64{}
	for _, b := range tables {
		if b == nil {
			continue
		}
		for i, s := range b.Start {
			counts[floorTo(s, w)] += b.Records[i]
		}
	}
	for len(counts) > maxBuckets {
		w = coarser(w)
		next := map[int64]int64{}
		for s, c := range counts {
			next[floorTo(s, w)] += c
		}
		counts = next
	}
	return fromMap(w, counts)
}

func coarser(w int64) int64 {
	for _, d := range bucketWidths {
		if int64(d) > w {
			return int64(d)
		}
	}
	return w * 2
}
