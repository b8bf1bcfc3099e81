package kafka

import (
	"context"
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/twmb/franz-go/pkg/kgo"

	"bitsift/demo"
	"bitsift/ingest"
	"bitsift/internal/kafkafake"
	"bitsift/model"
	"bitsift/profile"
)

// waitUntil polls cond until it holds, failing the test after a generous
// deadline (the machine is shared; no fixed sleeps).
func waitUntil(t *testing.T, what string, cond func() bool) {
	t.Helper()
	deadline := time.Now().Add(60 * time.Second)
	for !cond() {
		if time.Now().After(deadline) {
			t.Fatalf("timed out waiting for %s", what)
		}
		time.Sleep(20 * time.Millisecond)
	}
}

// profileName is a worker's profile file name: topic, partition, range.
var profileName = regexp.MustCompile(`^(.+)\.p(\d{4})\.(\d{20})-(\d{20})\.[-\w]+\.bsp$`)

// spansIn lists the spans of the profiles in dir, by file name.
// At the end (final), no temporary file may be left behind.
func spansIn(t *testing.T, dir string, final bool) ([]Span, []string) {
	t.Helper()
	ents, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var spans []Span
	var paths []string
	for _, e := range ents {
		m := profileName.FindStringSubmatch(e.Name())
		if m == nil {
			if final && strings.HasPrefix(e.Name(), ".bitsift-part-") {
				t.Errorf("a temporary file was left behind: %s", e.Name())
			}
			continue
		}
		p, _ := strconv.Atoi(m[2])
		from, _ := strconv.ParseInt(m[3], 10, 64)
		to, _ := strconv.ParseInt(m[4], 10, 64)
		spans = append(spans, Span{Topic: m[1], Partition: int32(p), From: from, To: to, Index: len(paths)})
		paths = append(paths, filepath.Join(dir, e.Name()))
	}
	return spans, paths
}

// fleet is the three-worker scenario: six partitions; W1 and W2 start,
// W3 joins late, W1 is killed right after writing a profile and before
// committing its offsets, W2 leaves; W3 reads the rest until idle. The
// producer writes the demo stream throughout. It returns the profiles'
// folder and the lines produced.
type fleet struct {
	dir   string
	lines [][]byte
}

func runFleet(t *testing.T, encode func(*Segment, io.Writer) error, newIngester func() (*ingest.Ingester, error)) fleet {
	const parts, total = 6, 6000
	c, topic := kafkafake.Start(t, parts)
	dir := t.TempDir()
	cl := c.Client(t, kgo.RecordPartitioner(kgo.ManualPartitioner()))
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()

	var produced sync.Mutex
	var lines [][]byte
	var sent int
	prodDone := make(chan error, 1)
	gate := make(chan struct{}) // the second half waits for the late joiner
	go func() {
		g := demo.New(7, total)
		for sent < total {
			if sent == total/2 {
				select {
				case <-gate:
				case <-ctx.Done():
					prodDone <- ctx.Err()
					return
				}
			}
			var recs []*kgo.Record
			for range 120 {
				v := g.Append(nil)
				produced.Lock()
				lines = append(lines, v)
				produced.Unlock()
				recs = append(recs, &kgo.Record{Topic: topic, Partition: int32(sent % parts), Value: v})
				sent++
			}
			if err := cl.ProduceSync(ctx, recs...).FirstErr(); err != nil {
				prodDone <- err
				return
			}
			time.Sleep(40 * time.Millisecond) // a steady stream, several time buckets long
		}
		prodDone <- nil
	}()

	opts := func(name string, crashAfter int) WorkerOptions {
		id := ""
		if crashAfter > 0 {
			id = topic + "-" + name // static: its end is noticed as a kill's, at the session timeout
		}
		return WorkerOptions{instanceID: id, Conn: Conn{Brokers: c.Brokers, ClientID: name}, Topic: topic, Group: topic + "-profilers", Dir: dir,
			Start: Start{Kind: "oldest"}, Bucket: 400 * time.Millisecond, Idle: 3 * time.Second,
			Ingester: newIngester, Encode: encode, SessionTimeout: c.SessionTimeout(), crashAfter: crashAfter, Log: testLog{t, name}}
	}
	type result struct {
		name string
		err  error
	}
	done := make(chan result, 3)
	start := func(name string, crashAfter int, ctx context.Context) *Worker {
		w, err := NewWorker(opts(name, crashAfter))
		if err != nil {
			t.Fatal(err)
		}
		go func() { done <- result{name, w.Run(ctx)} }()
		return w
	}
	count := func() int { s, _ := spansIn(t, dir, false); return len(s) }

	w1 := start("w1", 3, ctx)
	ctx2, leave2 := context.WithCancel(ctx)
	defer leave2()
	w2 := start("w2", 0, ctx2)
	waitUntil(t, "the first profiles", func() bool { return count() >= 2 })
	w3 := start("w3", 0, ctx)
	waitUntil(t, "the late joiner's first partitions", func() bool {
		w3.mu.Lock()
		defer w3.mu.Unlock()
		return w3.Stats.Rebalances > 0
	})
	close(gate)
	ended := map[string]error{}
	waitFor := func(name string) {
		t.Helper()
		for {
			if _, ok := ended[name]; ok {
				return
			}
			select {
			case r := <-done:
				ended[r.name] = r.err
			case <-time.After(60 * time.Second):
				t.Fatalf("%s never ended", name)
			}
		}
	}
	waitFor("w1")
	if !errors.Is(ended["w1"], errCrashed) {
		t.Fatalf("w1 ended with %v, not killed after writing", ended["w1"])
	}
	waitUntil(t, "w2 to read records", func() bool {
		w2.mu.Lock()
		defer w2.mu.Unlock()
		return w2.Stats.Records > 0
	})
	leave2()
	waitFor("w2")
	if err := <-prodDone; err != nil {
		t.Fatal(err)
	}
	waitFor("w3")
	for _, n := range []string{"w2", "w3"} {
		if ended[n] != nil {
			t.Errorf("%s: %v", n, ended[n])
		}
	}
	t.Logf("records read: w1 %d, w2 %d, w3 %d; profiles: w1 %d, w2 %d, w3 %d",
		w1.Stats.Records, w2.Stats.Records, w3.Stats.Records, w1.Stats.Profiles, w2.Stats.Profiles, w3.Stats.Profiles)
	if w3.Stats.Records == 0 || w2.Stats.Records == 0 {
		t.Errorf("a worker read nothing: the group did not share the partitions")
	}
	return fleet{dir: dir, lines: lines}
}

type testLog struct {
	t    *testing.T
	name string
}

func (l testLog) Write(p []byte) (int, error) {
	l.t.Logf("%s: %s", l.name, strings.TrimSpace(string(p)))
	return len(p), nil
}

// TestFleetMergeEqualsOneProcess is the three-worker test: whatever the
// workers did (one joined late, one left, one was killed between writing
// a profile and committing its offsets), the chains of the profiles they
// left cover every offset of every partition once, the killed worker's
// last profile is left out as a repeat, and the merged profile gives the
// figures one process gives reading the same records: every field's
// entropy, distinct count and kind, every pair's joint and conditional
// entropy. The one-process reading is the independent side here: it
// reads the lines as produced, through one Ingester, without Kafka,
// profiles or merging.
func TestFleetMergeEqualsOneProcess(t *testing.T) {
	if testing.Short() {
		t.Skip("-short: three workers in a consumer group for seconds")
	}
	all, _ := model.ParseWindow("all")
	cfg := ingest.Config{Model: model.Options{Window: all, KeepText: true, NoIdentifiers: true}}
	encode := func(s *Segment, w io.Writer) error { return profile.Write(w, SegmentProfile(s, nil, 1<<16)) }
	f := runFleet(t, encode, func() (*ingest.Ingester, error) { return ingest.New(cfg) })

	spans, paths := spansIn(t, f.dir, true)
	ch := Chains(spans)
	if len(ch.Gaps) > 0 || len(ch.Overlaps) > 0 {
		t.Fatalf("gaps %v, overlaps %v", ch.Gaps, ch.Overlaps)
	}
	if len(ch.Repeats) == 0 {
		t.Errorf("no repeat: the killed worker's uncommitted profile should repeat a range")
	}
	var used int64
	for _, c := range ch.Covered {
		if c.From != 0 {
			t.Errorf("partition %d chained from %d, not 0", c.Partition, c.From)
		}
		used += c.To - c.From
	}
	if used != int64(len(f.lines)) || len(ch.Covered) != 6 {
		t.Fatalf("the chains cover %d offsets over %d partitions; %d records were produced into 6", used, len(ch.Covered), len(f.lines))
	}

	var ps []*profile.Profile
	for _, p := range paths {
		pr, err := profile.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		ps = append(ps, pr)
	}
	merged, notes, err := Merge(ps)
	if err != nil {
		t.Fatal(err)
	}
	if len(notes) != len(ch.Repeats) || len(merged.Faults) != 0 {
		t.Errorf("notes %v, faults %v", notes, merged.Faults)
	}
	got := merged.Snapshot(model.SnapshotOptions{})

	ref, err := ingest.New(ingest.Config{Model: model.Options{Window: all}})
	if err != nil {
		t.Fatal(err)
	}
	for i, l := range f.lines {
		ref.Line(l, int64(i+1), "produced")
	}
	ref.Flush()
	want := ref.Snapshot(model.SnapshotOptions{})
	compareSnapshots(t, got, want)
}

// compareSnapshots checks every field (entropy, distinct values, kind,
// companion or not) and every pair's joint and conditional entropies.
func compareSnapshots(t *testing.T, got, want *model.Snapshot) {
	t.Helper()
	if got.Records != want.Records || len(got.Fields) != len(want.Fields) {
		t.Fatalf("merged: %d records, %d fields; one process: %d, %d", got.Records, len(got.Fields), want.Records, len(want.Fields))
	}
	const eps = 1e-9
	for _, w := range want.Fields {
		i := got.Index(w.Name)
		if i < 0 {
			t.Errorf("field %s missing from the merge", w.Name)
			continue
		}
		g := got.Fields[i]
		if g.Distinct != w.Distinct || g.Kind != w.Kind || math.Abs(g.Entropy-w.Entropy) > eps || g.BestGiven != w.BestGiven || math.Abs(g.Residual-w.Residual) > eps {
			t.Errorf("field %s: merged H %.12f, %d distinct, %v; one process %.12f, %d, %v", w.Name, g.Entropy, g.Distinct, g.Kind, w.Entropy, w.Distinct, w.Kind)
		}
	}
	pairs := 0
	for a := range want.Fields {
		for b := range want.Fields {
			if a == b || !want.HasPair(a, b) {
				continue
			}
			ga, gb := got.Index(want.Fields[a].Name), got.Index(want.Fields[b].Name)
			if !got.HasPair(ga, gb) {
				t.Errorf("pair %s, %s missing from the merge", want.Fields[a].Name, want.Fields[b].Name)
				continue
			}
			pairs++
			if math.Abs(got.Joint(ga, gb)-want.Joint(a, b)) > eps || math.Abs(got.Cond(ga, gb)-want.Cond(a, b)) > eps {
				t.Errorf("pair %s, %s: merged H %.12f, H(|) %.12f; one process %.12f, %.12f", want.Fields[a].Name, want.Fields[b].Name,
					got.Joint(ga, gb), got.Cond(ga, gb), want.Joint(a, b), want.Cond(a, b))
			}
		}
	}
	if pairs == 0 {
		t.Fatal("no pair compared")
	}
	extra := 0
	for a := range got.Fields {
		for b := range got.Fields {
			if a != b && got.HasPair(a, b) {
				extra++
			}
		}
	}
	if extra != pairs {
		t.Errorf("the merge has %d ordered pairs, one process %d", extra, pairs)
	}
	t.Logf("compared %d fields and %d ordered pairs over %d records", len(want.Fields), pairs, want.Records)
}
