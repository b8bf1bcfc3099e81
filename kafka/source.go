package kafka

import (
	"context"
	"fmt"
	"io"
	"sort"
	"strconv"
	"sync"
	"time"

	"github.com/twmb/franz-go/pkg/kadm"
	"github.com/twmb/franz-go/pkg/kgo"

	"bitsift/parse"
)

// Options say what a Source reads.
type Options struct {
	Conn
	Topic string
	Start Start
	// Bounded ends the source (io.EOF) once every partition has been read
	// to the end offset it had when the source was opened: report and
	// replay read what the topic holds, watch follows it.
	Bounded bool
	// Idle ends the source once no record has come for this long (0:
	// never), as --idle ends a followed file.
	Idle time.Duration
	// MaxLine is the longest record value in bytes (0:
	// parse.DefaultMaxLine); a longer one is a line rejected as too long.
	MaxLine int
	// Timeout bounds the first requests to the cluster (0: 15s), so that
	// unreachable brokers fail the command instead of hanging it.
	Timeout time.Duration
}

// Source reads a topic's records as lines, one record a line (a trailing
// line ending is dropped), partitions interleaved as they arrive. A line's
// Source is "TOPIC/PARTITION" and its Num the record's offset. Its status
// lists the partitions with their positions, end offsets and lag; events
// say when reading starts, when every partition has caught up with the end
// of its log, and faults. Records are read with isolation level read
// committed: records of aborted transactions are never counted.
//
// Only one goroutine may call Next; Status may be called from any.
type Source struct {
	cl   *kgo.Client
	opt  Options
	name string

	buf []*kgo.Record
	i   int

	last     time.Time // when the last record came (for Idle)
	lastErr  string
	caughtUp bool

	mu     sync.Mutex
	status parse.SourceStatus
	parts  map[int32]*parse.PartStatus
	order  []int32
}

// Open connects to the cluster, finds the topic's partitions and where
// opt.Start begins in each, and returns a Source reading from there.
func Open(ctx context.Context, opt Options) (*Source, error) {
	if opt.Topic == "" {
		return nil, fmt.Errorf("kafka: give --topic")
	}
	if opt.MaxLine <= 0 {
		opt.MaxLine = parse.DefaultMaxLine
	}
	if opt.Timeout <= 0 {
		opt.Timeout = 15 * time.Second
	}
	base, err := opt.Conn.Opts()
	if err != nil {
		return nil, err
	}
	admCl, err := kgo.NewClient(base...)
	if err != nil {
		return nil, err
	}
	lctx, cancel := context.WithTimeout(ctx, opt.Timeout)
	b, err := listBounds(lctx, kadm.NewClient(admCl), opt.Topic, opt.Start)
	cancel()
	admCl.Close()
	if err != nil {
		return nil, fmt.Errorf("kafka: %w", err)
	}
	s := &Source{opt: opt, name: "kafka " + opt.Topic, parts: map[int32]*parse.PartStatus{}, last: time.Now()}
	s.status = parse.SourceStatus{Name: s.name, State: parse.StateLive}
	if opt.Bounded {
		s.status.State = parse.StateReading
	}
	offsets := map[int32]kgo.Offset{}
	for _, p := range b.parts {
		ps := &parse.PartStatus{Name: opt.Topic + "/" + strconv.Itoa(int(p)), Position: b.from[p], End: b.end[p], Lag: b.end[p] - b.from[p], Until: -1}
		if opt.Bounded {
			ps.Until = b.end[p]
			if b.from[p] >= b.end[p] {
				continue // nothing to read in it
			}
		}
		s.parts[p], s.order = ps, append(s.order, p)
		offsets[p] = kgo.NewOffset().At(b.from[p])
	}
	if opt.Bounded {
		for _, p := range b.parts {
			if _, ok := s.parts[p]; !ok {
				s.parts[p] = &parse.PartStatus{Name: opt.Topic + "/" + strconv.Itoa(int(p)), Position: b.from[p], End: b.end[p], Until: b.end[p]}
				s.order = append(s.order, p)
			}
		}
	}
	sort.Slice(s.order, func(i, j int) bool { return s.order[i] < s.order[j] })
	s.event("start", fmt.Sprintf("%d partitions of %s from %s", len(b.parts), opt.Topic, opt.Start))
	if len(offsets) == 0 {
		return s, nil // a bounded read with nothing to read
	}
	opts := append(base,
		kgo.ConsumePartitions(map[string]map[int32]kgo.Offset{opt.Topic: offsets}),
		kgo.FetchIsolationLevel(kgo.ReadCommitted()),
		kgo.FetchMaxWait(500*time.Millisecond),
	)
	if s.cl, err = kgo.NewClient(opts...); err != nil {
		return nil, err
	}
	return s, nil
}

// Next implements parse.Source.
func (s *Source) Next(ctx context.Context) (parse.Line, error) {
	for {
		if err := ctx.Err(); err != nil {
			return parse.Line{}, err
		}
		for s.i < len(s.buf) {
			r := s.buf[s.i]
			s.buf[s.i] = nil
			s.i++
			if l, ok := s.take(r); ok {
				return l, nil
			}
		}
		s.buf, s.i = s.buf[:0], 0
		if s.cl == nil || (s.opt.Bounded && s.allRead()) {
			s.setState(parse.StateDone)
			return parse.Line{}, io.EOF
		}
		if s.opt.Idle > 0 && time.Since(s.last) >= s.opt.Idle {
			s.setState(parse.StateDone)
			s.setNote("stopped: no record for --idle " + s.opt.Idle.String())
			return parse.Line{}, io.EOF
		}
		if err := s.poll(ctx); err != nil {
			return parse.Line{}, err
		}
	}
}

// poll waits for records (at most until Idle runs out) and buffers them.
func (s *Source) poll(ctx context.Context) error {
	pctx, cancel := ctx, context.CancelFunc(func() {})
	if s.opt.Idle > 0 {
		pctx, cancel = context.WithDeadline(ctx, s.last.Add(s.opt.Idle))
	}
	fetches := s.cl.PollFetches(pctx)
	cancel()
	if err := ctx.Err(); err != nil {
		return err
	}
	if fetches.IsClientClosed() {
		return io.EOF
	}
	var firstErr error
	fetches.EachError(func(t string, p int32, err error) {
		if err == context.DeadlineExceeded || err == context.Canceled {
			return
		}
		if msg := err.Error(); msg != s.lastErr {
			s.lastErr = msg
			s.event("fault", fmt.Sprintf("%s/%d: %s", t, p, msg))
			if firstErr == nil {
				firstErr = &parse.SourceError{Source: fmt.Sprintf("%s/%d", t, p), Err: err}
			}
		}
	})
	s.mu.Lock()
	fetches.EachPartition(func(fp kgo.FetchTopicPartition) {
		if ps := s.parts[fp.Partition]; ps != nil && fp.HighWatermark > 0 {
			ps.End = max(ps.End, fp.HighWatermark)
		}
		s.buf = append(s.buf, fp.Records...)
	})
	s.mu.Unlock()
	if len(s.buf) > 0 {
		s.last = time.Now()
		return nil
	}
	if firstErr != nil {
		return firstErr
	}
	if fetches.NumRecords() == 0 && len(fetches) > 0 && fetches.Err() != nil {
		// Only errors: wait a little before asking again.
		t := time.NewTimer(250 * time.Millisecond)
		defer t.Stop()
		select {
		case <-ctx.Done():
			return ctx.Err()
		case <-t.C:
		}
	}
	return nil
}

// take turns a record into a line, updating its partition; false for a
// record past a bounded read's end.
func (s *Source) take(r *kgo.Record) (parse.Line, bool) {
	s.mu.Lock()
	ps := s.parts[r.Partition]
	if ps == nil || (ps.Until >= 0 && r.Offset >= ps.Until) {
		s.mu.Unlock()
		return parse.Line{}, false
	}
	ps.Position = r.Offset + 1
	ps.End = max(ps.End, ps.Position)
	ps.Lag = ps.End - ps.Position
	ps.Records++
	s.status.Lines++
	s.status.BytesRead += int64(len(r.Value))
	s.mu.Unlock()
	s.noteCaughtUp()
	return recordLine(r, ps.Name, s.opt.MaxLine), true
}

// recordLine is a record as a line of source name: its value less a
// trailing line ending, its offset as the line number.
func recordLine(r *kgo.Record, name string, maxLine int) parse.Line {
	v := r.Value
	if n := len(v); n > 0 && v[n-1] == '\n' {
		v = v[:n-1]
		if n := len(v); n > 0 && v[n-1] == '\r' {
			v = v[:n-1]
		}
	}
	l := parse.Line{Text: v, Num: r.Offset, Source: name}
	if len(v) > maxLine {
		l.Text, l.TooLong = nil, true
	}
	return l
}

// behindLag is the lag, in records, past which a source that had caught
// up says it has fallen behind.
const behindLag = 10_000

// noteCaughtUp records the consumer's state changing as events: every
// partition read to the end of its log as last seen ("caught up"), and
// after that a lag past behindLag ("behind").
func (s *Source) noteCaughtUp() {
	s.mu.Lock()
	var lag int64
	for _, ps := range s.parts {
		lag += max(ps.End-ps.Position, 0)
	}
	s.mu.Unlock()
	switch {
	case !s.caughtUp && lag == 0:
		s.caughtUp = true
		s.event("caught up", "every partition read to the end of its log")
	case s.caughtUp && lag > behindLag:
		s.caughtUp = false
		s.event("behind", fmt.Sprintf("%s records behind the end of the log", thousands(lag)))
	}
}

func (s *Source) allRead() bool {
	s.mu.Lock()
	defer s.mu.Unlock()
	for _, ps := range s.parts {
		if ps.Until >= 0 && ps.Position < ps.Until {
			return false
		}
	}
	return true
}

// Status implements parse.Source: the partitions in order, with the
// total lag in the note.
func (s *Source) Status() parse.SourceStatus {
	s.mu.Lock()
	defer s.mu.Unlock()
	st := s.status
	st.Events = append([]parse.SourceEvent(nil), st.Events...)
	var lag int64
	for _, p := range s.order {
		ps := *s.parts[p]
		if ps.Until >= 0 {
			ps.Lag = ps.Until - ps.Position
		}
		lag += max(ps.Lag, 0)
		st.Parts = append(st.Parts, ps)
	}
	if st.Note == "" {
		st.Note = fmt.Sprintf("%d partitions · lag %s", len(s.order), thousands(lag))
		if s.opt.Bounded {
			st.Note = fmt.Sprintf("%d partitions · %s records left", len(s.order), thousands(lag))
		}
	}
	return st
}

// Close implements parse.Source.
func (s *Source) Close() error {
	if s.cl != nil {
		s.cl.Close()
	}
	return nil
}

func (s *Source) event(kind, detail string) {
	s.mu.Lock()
	s.status.Events = append(s.status.Events, parse.SourceEvent{Time: time.Now(), Kind: kind, Detail: detail})
	s.mu.Unlock()
}

func (s *Source) setState(st parse.SourceState) {
	s.mu.Lock()
	s.status.State = st
	s.mu.Unlock()
}

func (s *Source) setNote(n string) {
	s.mu.Lock()
	s.status.Note = n
	s.mu.Unlock()
}

// thousands writes n with commas: 12,345.
func thousands(n int64) string {
	s := strconv.FormatInt(n, 10)
	if n < 0 {
		return s
	}
	for i := len(s) - 3; i > 0; i -= 3 {
		s = s[:i] + "," + s[i:]
	}
	return s
}
