package cli

import (
	"bytes"
	"context"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/twmb/franz-go/pkg/kadm"

	"bitsift/internal/kafkafake"
)

// TestWorkerMergeReportsGaps: a worker profiles a topic (four profiles
// per partition), merge adds them to the report of every record; a
// profile taken away, and records deleted from the log before a worker
// read them, are both reported by merge as missing data with their
// offsets, and merge exits 3.
func TestWorkerMergeReportsGaps(t *testing.T) {
	c, topic := kafkafake.Start(t, 2)
	brokers := strings.Join(c.Brokers, ",")
	data := demoLines(400)
	produceLines(t, c, topic, 2, data)
	dir := t.TempDir()
	worker := func() {
		t.Helper()
		code, _, errs := run(t, "", "worker", "--brokers", brokers, "--topic", topic, "--group", topic+"-g", "--profiles", dir,
			"--idle", "1500ms", "--max-records", "50")
		if code != 0 {
			t.Fatalf("worker: exit %d: %s", code, errs)
		}
	}
	worker()
	bsp, _ := filepath.Glob(filepath.Join(dir, "*.bsp"))
	if len(bsp) != 8 {
		t.Fatalf("%d profiles, want 4 for each of 2 partitions: %v", len(bsp), bsp)
	}
	code, out, errs := run(t, "", "merge", dir)
	if code != 0 || !strings.Contains(out, "400 records") {
		t.Fatalf("merge: exit %d: %s\n%s", code, errs, out)
	}
	code, want, _ := run(t, "", "report", write(t, "same.jsonl", data))
	if code != 0 || firstLines(want, 2) != firstLines(out, 2) {
		t.Errorf("merge and report of the same lines differ:\n%s\n---\n%s", firstLines(out, 2), firstLines(want, 2))
	}

	// Records deleted before they were read: partition 0 has 200 read
	// and committed; 100 more come and the first 30 of them are deleted.
	produceLines(t, c, topic, 1, demoLines(100)) // all into partition 0
	ctx := context.Background()
	offs := kadm.Offsets{}
	offs.Add(kadm.Offset{Topic: topic, Partition: 0, At: 230})
	if _, err := c.Admin(t).DeleteRecords(ctx, offs); err != nil {
		t.Fatal(err)
	}
	worker()
	// And a profile lost: partition 1's second.
	lost := regexp.MustCompile(`\.p0001\.0+50-0+100\.`)
	for _, p := range bsp {
		if lost.MatchString(p) {
			os.Remove(p)
		}
	}
	code, out, errs = run(t, "", "merge", dir)
	if code != ExitPartial {
		t.Fatalf("merge with gaps: exit %d, want %d: %s", code, ExitPartial, errs)
	}
	for _, want := range []string{topic + "/0 offsets 200–229 (30 offsets)", topic + "/1 offsets 50–99 (50 offsets)"} {
		if !strings.Contains(errs, want) || !strings.Contains(out, want) {
			t.Errorf("merge does not name the gap %q\nstderr: %s\nreport: %s", want, errs, out)
		}
	}
	t.Logf("merge with gaps:\n%s\n%s", errs, out)
	if !strings.Contains(out, "420 records") { // 400 + 70 − 50
		t.Errorf("the merge does not count the 420 records there are:\n%s", firstLines(out, 3))
	}
}

func firstLines(s string, n int) string {
	l := strings.SplitN(s, "\n", n+1)
	return strings.Join(l[:min(n, len(l))], "\n")
}

// syncBuffer is a bytes.Buffer safe to read while a command writes it.
type syncBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (s *syncBuffer) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Write(p)
}

func (s *syncBuffer) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.String()
}

// TestWorkerStopsAfterItsProfile: a worker stopped as SIGTERM stops it (its
// context cancelled) writes the profile it has open and commits it: the
// next worker of the group finds nothing left to read, and the merge
// counts every record once.
func TestWorkerStopsAfterItsProfile(t *testing.T) {
	c, topic := kafkafake.Start(t, 1)
	brokers := strings.Join(c.Brokers, ",")
	produceLines(t, c, topic, 1, demoLines(250))
	dir := t.TempDir()
	args := []string{"worker", "--brokers", brokers, "--topic", topic, "--group", topic + "-g", "--profiles", dir, "--bucket", "1h", "--max-records", "100"}
	ctx, stop := context.WithCancel(context.Background())
	defer stop()
	var errs syncBuffer
	done := make(chan int, 1)
	go func() { done <- Run(ctx, args, IO{In: strings.NewReader(""), Out: io.Discard, Err: &errs}) }()
	profiles := func() []string { p, _ := filepath.Glob(filepath.Join(dir, "*.bsp")); return p }
	deadline := time.Now().Add(60 * time.Second)
	for len(profiles()) < 2 {
		if time.Now().After(deadline) {
			t.Fatalf("no two profiles written: %s", errs.String())
		}
		time.Sleep(20 * time.Millisecond)
	}
	stop() // as SIGTERM does (main's signal context)
	select {
	case code := <-done:
		if code != 0 {
			t.Fatalf("worker stopped with exit %d: %s", code, errs.String())
		}
	case <-time.After(60 * time.Second):
		t.Fatal("the worker did not stop")
	}
	last := regexp.MustCompile(`\.p0000\.0+200-0+250\.`)
	if ps := profiles(); len(ps) != 3 || !last.MatchString(strings.Join(ps, " ")) {
		t.Fatalf("profiles after the stop: %v, want the open one [200, 250) written too", ps)
	}
	code, _, e := run(t, "", "worker", "--brokers", brokers, "--topic", topic, "--group", topic+"-g", "--profiles", dir, "--idle", "1s")
	if code != 0 || len(profiles()) != 3 {
		t.Fatalf("the next worker: exit %d, %d profiles (its offsets were not committed?): %s", code, len(profiles()), e)
	}
	if code, out, e := run(t, "", "merge", dir); code != 0 || !strings.Contains(out, "250 lines read: 250 records") || e != "" {
		t.Errorf("merge: exit %d, stderr %q:\n%s", code, e, firstLines(out, 2))
	}
}
