package kafka

import (
	"context"
	"crypto/rand"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/twmb/franz-go/pkg/kadm"
	"github.com/twmb/franz-go/pkg/kerr"
	"github.com/twmb/franz-go/pkg/kgo"
	"github.com/twmb/franz-go/pkg/kmsg"

	"bitsift/ingest"
	"bitsift/profile"
)

// WorkerOptions say what a Worker reads and where its profiles go.
type WorkerOptions struct {
	Conn
	Topic, Group string
	// Dir is the folder the profiles are written to.
	Dir string
	// Start is where a partition the group has no offset for begins:
	// "oldest" (the default) or "newest".
	Start Start
	// Bucket is the time bucket of a profile (0: one minute): a
	// partition's profile is closed when a record of a later bucket comes
	// (by the record's Kafka timestamp), and at the latest once it has
	// been open for Bucket, so offsets are committed at least that often.
	Bucket time.Duration
	// MaxRecords closes a profile once it counts this many records (0:
	// 100,000): a profile keeps every value and pair cell of its records
	// (see model.Options.NoIdentifiers), so this bounds the memory.
	MaxRecords int64
	// For ends the worker after this long, Idle once no record has come
	// for this long (0: neither).
	For, Idle time.Duration
	// MaxLine is the longest record value in bytes (0: parse default).
	MaxLine int
	// Ingester makes the Ingester whose choices (format, companions,
	// timestamp field, redaction) every profile of this worker shares.
	Ingester func() (*ingest.Ingester, error)
	// Encode writes the profile of a closed segment.
	Encode func(seg *Segment, w io.Writer) error
	// Log receives a line per profile written and per rebalance (nil:
	// none).
	Log io.Writer
	// SessionTimeout is the group's session timeout (0: franz-go's
	// default, 45s); tests make it short.
	SessionTimeout time.Duration

	// crashAfter, in tests, makes the worker stop dead right after
	// writing its crashAfter-th profile, before committing its offsets.
	// With instanceID (static membership) its client then closes without
	// leaving the group, as a killed process does: the group notices when
	// its session times out.
	crashAfter int
	instanceID string
}

// Segment is the records of one partition that one profile counts: the
// offsets [From, To).
type Segment struct {
	Topic     string
	Partition int32
	From, To  int64
	Records   int64
	// Bucket is the start of the time bucket of its first record.
	Bucket time.Time
	In     *ingest.Ingester
	opened time.Time
}

// FileName is the profile's name in the folder: topic, partition, offset
// range and the writer's id, so that a listing sorts by partition and
// offset, and two workers that counted the same range (one died before
// committing) leave two files, not one over the other.
func (s *Segment) FileName(id string) string {
	return fmt.Sprintf("%s.p%04d.%020d-%020d.%s.bsp", s.Topic, s.Partition, s.From, s.To, id)
}

// Worker consumes its share of a topic's partitions in a consumer group
// and writes one profile per partition and time bucket. Offsets are
// committed only after the profile that counts the records before them is
// on disk (a temporary file, synced, renamed into place, the folder
// synced). A worker that dies between the two leaves a profile whose
// records the partition's next owner reads again from the last commit:
// Chains finds that profile's range counted twice and leaves it out.
//
// Partitions taken away in a rebalance have their profiles closed and
// committed before they go (the rebalance waits for it); partitions lost
// (the member was dropped from the group) have their open profiles thrown
// away, as their records will be read again by the new owner.
type Worker struct {
	opt WorkerOptions
	id  string // in file names: host, process and a random part
	cl  *kgo.Client
	adm *kadm.Client
	// ready is closed once cl and adm are set: kgo.NewClient starts joining
	// the group before it returns, so adjust may run before then.
	ready chan struct{}

	mu sync.Mutex // the state below; held by the poll loop and the group callbacks
	// proto has chosen format and companions (from the first records);
	// every segment's Ingester is a Fresh copy of it.
	proto   *ingest.Ingester
	pending []*kgo.Record // records waiting for proto to choose
	segs    map[int32]*Segment
	// next is where the next segment of a partition begins: the offset
	// committed (or the log's start, past it), then each segment's end.
	next    map[int32]int64
	commits map[int32]int64 // written, not yet committed
	written int
	crashed bool
	err     error

	Stats WorkerStats // under mu while Run runs
}

// WorkerStats count what a worker did.
type WorkerStats struct {
	Records, Profiles, Rebalances int64
}

var errCrashed = errors.New("worker stopped dead (test)")

// NewWorker checks opt and connects.
func NewWorker(opt WorkerOptions) (*Worker, error) {
	switch {
	case opt.Topic == "" || opt.Group == "" || opt.Dir == "":
		return nil, errors.New("worker: give --topic, --group and --profiles DIR")
	case opt.Ingester == nil || opt.Encode == nil:
		return nil, errors.New("worker: no ingester or encoder")
	}
	if opt.Bucket <= 0 {
		opt.Bucket = time.Minute
	}
	if opt.MaxLine <= 0 {
		opt.MaxLine = 1 << 20
	}
	if opt.MaxRecords <= 0 {
		opt.MaxRecords = 100_000
	}
	if err := os.MkdirAll(opt.Dir, 0o755); err != nil {
		return nil, fmt.Errorf("worker: --profiles: %w", err)
	}
	base, err := opt.Conn.Opts()
	if err != nil {
		return nil, err
	}
	w := &Worker{opt: opt, id: workerID(), segs: map[int32]*Segment{}, next: map[int32]int64{}, commits: map[int32]int64{}, ready: make(chan struct{})}
	reset := kgo.NewOffset().AtStart()
	if opt.Start.Kind == "newest" {
		reset = kgo.NewOffset().AtEnd()
	}
	opts := append(base,
		kgo.ConsumerGroup(opt.Group), kgo.ConsumeTopics(opt.Topic),
		kgo.DisableAutoCommit(), kgo.BlockRebalanceOnPoll(),
		kgo.ConsumeResetOffset(reset), kgo.FetchIsolationLevel(kgo.ReadCommitted()),
		kgo.FetchMaxWait(500*time.Millisecond),
		kgo.AdjustFetchOffsetsFn(w.adjust),
		kgo.OnPartitionsRevoked(w.revoked), kgo.OnPartitionsLost(w.lost),
	)
	if opt.instanceID != "" {
		opts = append(opts, kgo.InstanceID(opt.instanceID))
	}
	if opt.SessionTimeout > 0 {
		opts = append(opts, kgo.SessionTimeout(opt.SessionTimeout), kgo.HeartbeatInterval(opt.SessionTimeout/5),
			kgo.RebalanceTimeout(4*opt.SessionTimeout))
	}
	if w.cl, err = kgo.NewClient(opts...); err != nil {
		return nil, err
	}
	w.adm = kadm.NewClient(w.cl)
	close(w.ready)
	return w, nil
}

// Run consumes until ctx is done (SIGTERM), For has passed or nothing has
// come for Idle; then it closes and commits every open profile, leaves the
// group and returns.
func (w *Worker) Run(ctx context.Context) error {
	defer func() {
		if !w.crashed {
			w.cl.Close()
		}
	}()
	if w.opt.For > 0 {
		var cancel context.CancelFunc
		ctx, cancel = context.WithTimeout(ctx, w.opt.For)
		defer cancel()
	}
	last := time.Now()
	for ctx.Err() == nil {
		wait := w.opt.Bucket
		if w.opt.Idle > 0 {
			wait = min(wait, time.Until(last.Add(w.opt.Idle)))
		}
		pctx, cancel := context.WithTimeout(ctx, max(wait, time.Millisecond))
		fetches := w.cl.PollRecords(pctx, 10_000)
		cancel()
		if fetches.IsClientClosed() {
			break
		}
		fetches.EachError(func(t string, p int32, err error) {
			if !errors.Is(err, context.DeadlineExceeded) && !errors.Is(err, context.Canceled) {
				w.logf("fault: %s/%d: %v", t, p, err)
			}
		})
		n := fetches.NumRecords()
		w.mu.Lock()
		w.Stats.Records += int64(n)
		fetches.EachRecord(func(r *kgo.Record) { w.pending = append(w.pending, r) })
		err := w.route(ctx, n == 0)
		if err == nil {
			err = w.closeAged()
		}
		if err == nil {
			err = w.commit(ctx)
		}
		if err == nil && w.crashed {
			err = errCrashed // in a rebalance's callback
		}
		w.mu.Unlock()
		w.cl.AllowRebalance()
		if err != nil {
			if errors.Is(err, errCrashed) {
				w.cl.Close() // no commit, no profile past this one
			}
			return err
		}
		if n > 0 {
			last = time.Now()
		} else if w.opt.Idle > 0 && time.Since(last) >= w.opt.Idle {
			w.logf("no record for --idle %s: stopping", w.opt.Idle)
			break
		}
	}
	// Finish: the records read so far go into profiles, then their
	// offsets are committed, even though ctx may be done.
	fctx, cancel := context.WithTimeout(context.WithoutCancel(ctx), 30*time.Second)
	defer cancel()
	w.mu.Lock()
	defer w.mu.Unlock()
	err := w.route(fctx, true)
	for p := range w.segs {
		if err == nil {
			err = w.closeSeg(p)
		}
	}
	if err == nil {
		err = w.commit(fctx)
	}
	if errors.Is(err, errCrashed) {
		w.cl.Close()
	}
	if err == nil {
		err = w.err
	}
	return err
}

// route takes pending records into their partitions' segments, once proto
// has chosen the format and companions: from the first 64 records, or from
// fewer when no more are coming now (caughtUp).
func (w *Worker) route(ctx context.Context, caughtUp bool) error {
	if w.proto == nil {
		if len(w.pending) == 0 || (len(w.pending) < 64 && !caughtUp) {
			return nil
		}
		in, err := w.opt.Ingester()
		if err != nil {
			return err
		}
		for _, r := range w.pending[:min(64, len(w.pending))] {
			in.Take(recordLine(r, w.opt.Topic, w.opt.MaxLine))
		}
		in.Flush()
		w.proto = in
	}
	for i, r := range w.pending {
		w.pending[i] = nil
		if err := w.take(r); err != nil {
			w.pending = w.pending[i+1:]
			return err
		}
	}
	w.pending = w.pending[:0]
	return nil
}

// take adds one record to its partition's segment, closing the segment
// first when the record belongs to a later time bucket.
func (w *Worker) take(r *kgo.Record) error {
	b := r.Timestamp.Truncate(w.opt.Bucket)
	seg := w.segs[r.Partition]
	if seg != nil && b.After(seg.Bucket) {
		if err := w.closeSeg(r.Partition); err != nil {
			return err
		}
		seg = nil
	}
	if seg == nil {
		in, err := w.proto.Fresh()
		if err != nil {
			return err
		}
		from := r.Offset
		if n, ok := w.next[r.Partition]; ok && n <= r.Offset {
			from = n
		}
		seg = &Segment{Topic: r.Topic, Partition: r.Partition, From: from, Bucket: b, In: in, opened: time.Now()}
		in.AddSource(fmt.Sprintf("%s/%d", r.Topic, r.Partition))
		w.segs[r.Partition] = seg
	}
	seg.In.Take(recordLine(r, fmt.Sprintf("%s/%d", r.Topic, r.Partition), w.opt.MaxLine))
	seg.To = r.Offset + 1
	seg.Records++
	if seg.Records >= w.opt.MaxRecords {
		return w.closeSeg(r.Partition)
	}
	return nil
}

// closeAged closes the segments open for a bucket's length or longer.
func (w *Worker) closeAged() error {
	for p, s := range w.segs {
		if time.Since(s.opened) >= w.opt.Bucket {
			if err := w.closeSeg(p); err != nil {
				return err
			}
		}
	}
	return nil
}

// closeSeg writes partition p's open profile and queues its offset for
// the commit.
func (w *Worker) closeSeg(p int32) error {
	if w.crashed {
		return errCrashed // a dead worker writes nothing more
	}
	s := w.segs[p]
	if s == nil {
		return nil
	}
	delete(w.segs, p)
	s.In.Flush()
	path := filepath.Join(w.opt.Dir, s.FileName(w.id))
	if err := profile.WriteDurable(path, func(out io.Writer) error { return w.opt.Encode(s, out) }); err != nil {
		return fmt.Errorf("worker: profile %s: %w", path, err)
	}
	w.Stats.Profiles++
	w.logf("wrote %s (%d records)", filepath.Base(path), s.Records)
	w.written++
	if w.opt.crashAfter > 0 && w.written >= w.opt.crashAfter {
		w.crashed = true
		return errCrashed
	}
	w.next[p] = s.To
	w.commits[p] = s.To
	return nil
}

// commit commits the offsets of the profiles written, and waits for it.
func (w *Worker) commit(ctx context.Context) error {
	if len(w.commits) == 0 {
		return nil
	}
	offs := map[int32]kgo.EpochOffset{}
	for p, o := range w.commits {
		offs[p] = kgo.EpochOffset{Epoch: -1, Offset: o}
	}
	// A commit is not given up because the worker is being stopped.
	ctx, cancel := context.WithTimeout(context.WithoutCancel(ctx), 30*time.Second)
	defer cancel()
	var cerr error
	w.cl.CommitOffsetsSync(ctx, map[string]map[int32]kgo.EpochOffset{w.opt.Topic: offs},
		func(_ *kgo.Client, _ *kmsg.OffsetCommitRequest, resp *kmsg.OffsetCommitResponse, err error) {
			if err != nil {
				cerr = err
				return
			}
			for _, t := range resp.Topics {
				for _, p := range t.Partitions {
					if e := kerr.ErrorForCode(p.ErrorCode); e != nil && cerr == nil {
						cerr = fmt.Errorf("partition %d: %w", p.Partition, e)
					}
				}
			}
		})
	if cerr != nil {
		// The profiles stay; the next owner reads their records again and
		// merge leaves the repeats out.
		w.logf("commit failed (%v): the profiles written stay, their records will be read again", cerr)
	}
	clear(w.commits)
	return nil
}

// adjust learns where each newly assigned partition begins: the offset
// committed, or the log's start when retention has deleted records past
// it (those records are missing: merge reports the gap).
func (w *Worker) adjust(ctx context.Context, offs map[string]map[int32]kgo.Offset) (map[string]map[int32]kgo.Offset, error) {
	select {
	case <-w.ready:
	case <-ctx.Done():
		return offs, ctx.Err()
	}
	starts, err := w.adm.ListStartOffsets(ctx, w.opt.Topic)
	w.mu.Lock()
	defer w.mu.Unlock()
	w.Stats.Rebalances++
	var parts []int32
	for p, o := range offs[w.opt.Topic] {
		parts = append(parts, p)
		c := o.EpochOffset().Offset
		if c < 0 {
			delete(w.next, p)
			continue
		}
		if s, ok := starts.Lookup(w.opt.Topic, p); err == nil && ok && s.Err == nil && s.Offset > c {
			w.logf("partition %d: offsets %d–%d were deleted before they were read", p, c, s.Offset-1)
			c = s.Offset
		}
		w.next[p] = c
	}
	w.logf("assigned partitions %v", sortedParts(parts))
	return offs, nil
}

// revoked closes and commits the revoked partitions' profiles before they
// go to another member.
func (w *Worker) revoked(ctx context.Context, _ *kgo.Client, lost map[string][]int32) {
	w.mu.Lock()
	defer w.mu.Unlock()
	if w.crashed {
		return
	}
	parts := lost[w.opt.Topic]
	if err := w.route(ctx, true); err != nil && w.err == nil {
		w.err = err
	}
	for _, p := range parts {
		if err := w.closeSeg(p); err != nil && w.err == nil {
			w.err = err
		}
		delete(w.next, p)
	}
	w.commit(ctx)
	if len(parts) > 0 {
		w.logf("revoked partitions %v", sortedParts(parts))
	}
}

// lost throws away the lost partitions' open profiles: they cannot be
// committed, and their records go to the next owner.
func (w *Worker) lost(_ context.Context, _ *kgo.Client, lost map[string][]int32) {
	w.mu.Lock()
	defer w.mu.Unlock()
	gone := map[int32]bool{}
	for _, p := range lost[w.opt.Topic] {
		gone[p] = true
		delete(w.segs, p)
		delete(w.next, p)
		delete(w.commits, p)
	}
	kept := w.pending[:0]
	for _, r := range w.pending {
		if !gone[r.Partition] {
			kept = append(kept, r)
		}
	}
	w.pending = kept
	if len(gone) > 0 {
		w.logf("lost partitions %v: their open profiles are dropped and read again by their next owner", sortedParts(lost[w.opt.Topic]))
	}
}

func (w *Worker) logf(format string, a ...any) {
	if w.opt.Log != nil {
		fmt.Fprintf(w.opt.Log, "%s %s\n", time.Now().UTC().Format("15:04:05"), fmt.Sprintf(format, a...))
	}
}

// workerID names this worker in its file names: the host, the process and
// random bits (two workers on one host in one process, in tests, differ).
func workerID() string {
	host, _ := os.Hostname()
	host = strings.Map(func(r rune) rune {
		if r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || r == '-' {
			return r
		}
		return -1
	}, host)
	if len(host) > 24 {
		host = host[:24]
	}
	var b [3]byte
	rand.Read(b[:])
	return fmt.Sprintf("%s-%d-%x", host, os.Getpid(), b)
}

func sortedParts(ps []int32) string {
	s := append([]int32(nil), ps...)
	for i := 1; i < len(s); i++ {
		for j := i; j > 0 && s[j] < s[j-1]; j-- {
			s[j], s[j-1] = s[j-1], s[j]
		}
	}
	out := ""
	for i, p := range s {
		if i > 0 {
			out += ","
		}
		out += strconv.Itoa(int(p))
	}
	return out
}
