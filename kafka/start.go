package kafka

import (
	"context"
	"errors"
	"fmt"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/twmb/franz-go/pkg/kadm"
)

// Start is where reading a topic begins in each partition.
type Start struct {
	Kind   string    // "newest", "oldest", "offset" or "time"
	Offset int64     // Kind "offset": this offset in every partition
	Time   time.Time // Kind "time": the first record at or after it
}

// ParseStart reads a --start value: newest, oldest, an offset (every
// partition from it), an RFC 3339 time, or a duration meaning that long
// before now (15m).
func ParseStart(s string, now time.Time) (Start, error) {
	s = strings.TrimSpace(s)
	switch strings.ToLower(s) {
	case "newest", "":
		return Start{Kind: "newest"}, nil
	case "oldest":
		return Start{Kind: "oldest"}, nil
	}
	if n, err := strconv.ParseInt(s, 10, 64); err == nil {
		if n < 0 {
			return Start{}, fmt.Errorf("--start %s: an offset is 0 or more", s)
		}
		return Start{Kind: "offset", Offset: n}, nil
	}
	if t, err := time.Parse(time.RFC3339Nano, s); err == nil {
		return Start{Kind: "time", Time: t}, nil
	}
	if d, err := time.ParseDuration(s); err == nil && d > 0 {
		return Start{Kind: "time", Time: now.Add(-d)}, nil
	}
	return Start{}, fmt.Errorf("--start %q: use newest, oldest, an offset (1200), a time (2026-12-02T06:00:00Z) or a duration back from now (15m)", s)
}

func (s Start) String() string {
	switch s.Kind {
	case "offset":
		return "offset " + strconv.FormatInt(s.Offset, 10)
	case "time":
		return "records from " + s.Time.UTC().Format(time.RFC3339)
	}
	return s.Kind
}

// bounds are a topic's partitions with where reading starts and where the
// log ends now.
type bounds struct {
	parts []int32
	from  map[int32]int64
	end   map[int32]int64
	first map[int32]int64 // the log start offset
}

// listBounds asks the cluster for topic's partitions, their start and end
// offsets, and where s begins in each.
func listBounds(ctx context.Context, adm *kadm.Client, topic string, s Start) (bounds, error) {
	b := bounds{from: map[int32]int64{}, end: map[int32]int64{}, first: map[int32]int64{}}
	ends, err := adm.ListEndOffsets(ctx, topic)
	if err != nil {
		return b, explainDial(err)
	}
	if err := ends.Error(); err != nil {
		return b, fmt.Errorf("topic %s: %w", topic, err)
	}
	starts, err := adm.ListStartOffsets(ctx, topic)
	if err != nil {
		return b, explainDial(err)
	}
	if err := starts.Error(); err != nil {
		return b, fmt.Errorf("topic %s: %w", topic, err)
	}
	ends.Each(func(o kadm.ListedOffset) {
		b.parts = append(b.parts, o.Partition)
		b.end[o.Partition] = o.Offset
	})
	if len(b.parts) == 0 {
		return b, fmt.Errorf("topic %s: no such topic (or no partitions)", topic)
	}
	sort.Slice(b.parts, func(i, j int) bool { return b.parts[i] < b.parts[j] })
	starts.Each(func(o kadm.ListedOffset) { b.first[o.Partition] = o.Offset })
	var at kadm.ListedOffsets
	if s.Kind == "time" {
		if at, err = adm.ListOffsetsAfterMilli(ctx, s.Time.UnixMilli(), topic); err != nil {
			return b, explainDial(err)
		}
	}
	for _, p := range b.parts {
		lo, hi := b.first[p], b.end[p]
		switch s.Kind {
		case "oldest":
			b.from[p] = lo
		case "offset":
			b.from[p] = min(max(s.Offset, lo), hi)
		case "time":
			b.from[p] = hi
			if o, ok := at.Lookup(topic, p); ok && o.Err == nil && o.Offset >= 0 {
				b.from[p] = min(max(o.Offset, lo), hi)
			}
		default:
			b.from[p] = hi
		}
	}
	return b, nil
}

// explainDial makes a client error say what to check.
func explainDial(err error) error {
	if errors.Is(err, context.DeadlineExceeded) {
		return errors.New("no broker answered in time: check --brokers, and --tls or --sasl if the cluster needs them")
	}
	return err
}
