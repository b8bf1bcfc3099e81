package kafka

import (
	"context"
	"errors"
	"fmt"
	"io"
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
		return WorkerOptions{Conn: Conn{Brokers: c.Brokers, ClientID: name}, Topic: topic, Group: "profilers", Dir: dir,
			Start: Start{Kind: "oldest"}, Bucket: 400 * time.Millisecond, Idle: 3 * time.Second,
			Ingester: newIngester, Encode: encode, SessionTimeout: time.Second, crashAfter: crashAfter, Log: testLog{t, name}}
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

// TestFleetChainsCoverEveryOffsetOnce: whatever the workers did, the
// chains of the profiles they left cover every offset of every partition
// once, and the killed worker's last profile is left out as a repeat.
func TestFleetChainsCoverEveryOffsetOnce(t *testing.T) {
	if testing.Short() {
		t.Skip("-short: three workers in a consumer group for seconds")
	}
	encode := func(s *Segment, w io.Writer) error {
		_, err := fmt.Fprintf(w, "%d\n", s.Records)
		return err
	}
	newIn := func() (*ingest.Ingester, error) { return ingest.New(ingest.Config{}) }
	f := runFleet(t, encode, newIn)
	spans, paths := spansIn(t, f.dir, true)
	ch := Chains(spans)
	if len(ch.Gaps) > 0 || len(ch.Overlaps) > 0 {
		t.Fatalf("gaps %v, overlaps %v", ch.Gaps, ch.Overlaps)
	}
	if len(ch.Repeats) == 0 {
		t.Errorf("no repeat: the killed worker's uncommitted profile should repeat a range")
	}
	var records int64
	ends := map[int32]int64{}
	for _, s := range ch.Use {
		b, err := os.ReadFile(paths[s.Index])
		if err != nil {
			t.Fatal(err)
		}
		n, _ := strconv.ParseInt(strings.TrimSpace(string(b)), 10, 64)
		if n != s.To-s.From {
			t.Errorf("%v counts %d records", s, n)
		}
		records += n
		ends[s.Partition] = s.To
	}
	for _, c := range ch.Covered {
		if c.From != 0 {
			t.Errorf("partition %d chained from %d, not 0", c.Partition, c.From)
		}
	}
	if records != int64(len(f.lines)) || len(ends) != 6 {
		t.Fatalf("the chains count %d records over %d partitions; %d were produced into 6", records, len(ends), len(f.lines))
	}
}
