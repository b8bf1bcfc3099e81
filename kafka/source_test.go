package kafka

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"os/exec"
	"sort"
	"testing"
	"time"

	"github.com/twmb/franz-go/pkg/kgo"

	"bitsift/internal/kafkafake"
)

// readAll reads src to its end.
func readAll(t *testing.T, src *Source) []string {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	var got []string
	for {
		l, err := src.Next(ctx)
		if errors.Is(err, io.EOF) {
			return got
		}
		if err != nil {
			t.Fatalf("Next: %v", err)
		}
		got = append(got, fmt.Sprintf("%s@%d %s", l.Source, l.Num, l.Text))
	}
}

func TestSourceReadsEveryPartitionOnce(t *testing.T) {
	c, topic := kafkafake.Start(t, 4)
	cl := c.Client(t, kgo.RecordPartitioner(kgo.ManualPartitioner()))
	ctx := context.Background()
	want := map[string]bool{}
	for p := int32(0); p < 4; p++ {
		var vals [][]byte
		for i := 0; i < 50; i++ {
			v := fmt.Sprintf(`{"berth":"b%d","seq":%d}`, p, i)
			vals = append(vals, []byte(v+"\n"))
			want[fmt.Sprintf("%s/%d@%d %s", topic, p, i, v)] = true
		}
		if err := kafkafake.Produce(ctx, cl, topic, p, vals...); err != nil {
			t.Fatal(err)
		}
	}
	src, err := Open(ctx, Options{Conn: Conn{Brokers: c.Brokers}, Topic: topic, Start: Start{Kind: "oldest"}, Bounded: true})
	if err != nil {
		t.Fatal(err)
	}
	defer src.Close()
	got := readAll(t, src)
	if len(got) != len(want) {
		t.Fatalf("read %d lines, want %d", len(got), len(want))
	}
	for _, g := range got {
		if !want[g] {
			t.Errorf("unexpected or repeated line %q", g)
		}
		delete(want, g)
	}
	st := src.Status()
	if len(st.Parts) != 4 || st.Lines != 200 || st.State != "done" {
		t.Fatalf("status %+v", st)
	}
	for _, p := range st.Parts {
		if p.Position != 50 || p.End != 50 || p.Lag != 0 || p.Records != 50 {
			t.Errorf("partition %+v", p)
		}
	}
}

func TestSourceStarts(t *testing.T) {
	c, topic := kafkafake.Start(t, 2)
	cl := c.Client(t, kgo.RecordPartitioner(kgo.ManualPartitioner()))
	ctx := context.Background()
	for i := 0; i < 10; i++ {
		if err := kafkafake.Produce(ctx, cl, topic, int32(i%2), []byte(fmt.Sprintf("n=%d", i))); err != nil {
			t.Fatal(err)
		}
	}
	count := func(s Start) int {
		src, err := Open(ctx, Options{Conn: Conn{Brokers: c.Brokers}, Topic: topic, Start: s, Bounded: true})
		if err != nil {
			t.Fatal(err)
		}
		defer src.Close()
		return len(readAll(t, src))
	}
	if n := count(Start{Kind: "newest"}); n != 0 {
		t.Errorf("newest read %d records, want 0", n)
	}
	if n := count(Start{Kind: "offset", Offset: 3}); n != 4 { // offsets 3 and 4 of each partition
		t.Errorf("offset 3 read %d records, want 4", n)
	}
	if n := count(Start{Kind: "time", Time: time.Now().Add(time.Hour)}); n != 0 {
		t.Errorf("a time to come read %d records, want 0", n)
	}
	if n := count(Start{Kind: "time", Time: time.Now().Add(-time.Hour)}); n != 10 {
		t.Errorf("an hour back read %d records, want 10", n)
	}
}

func TestOpenUnknownTopic(t *testing.T) {
	c, _ := kafkafake.Start(t, 1)
	_, err := Open(context.Background(), Options{Conn: Conn{Brokers: c.Brokers}, Topic: "no-such-topic", Start: Start{Kind: "oldest"}, Bounded: true, Timeout: 5 * time.Second})
	if err == nil {
		t.Fatal("no error for a missing topic")
	}
}

// TestSourceReadsKcat produces with an independent client, Debian's kcat
// (librdkafka), and checks every line comes back once, in each
// partition's order.
func TestSourceReadsKcat(t *testing.T) {
	kcat, err := exec.LookPath("kcat")
	if err != nil {
		t.Skip("kcat not installed (apt-get install kcat): the independent producer is missing")
	}
	c, topic := kafkafake.Start(t, 3)
	var want []string
	for p := 0; p < 3; p++ {
		var in bytes.Buffer
		for i := 0; i < 40; i++ {
			fmt.Fprintf(&in, "quay=q%d manifest=m%03d crane=c%d\n", p, i, i%4)
			want = append(want, fmt.Sprintf("%s/%d@%d quay=q%d manifest=m%03d crane=c%d", topic, p, i, p, i, i%4))
		}
		cmd := exec.Command(kcat, "-P", "-b", c.Brokers[0], "-t", topic, "-p", fmt.Sprint(p))
		cmd.Stdin = &in
		if out, err := cmd.CombinedOutput(); err != nil {
			t.Fatalf("kcat: %v: %s", err, out)
		}
	}
	src, err := Open(context.Background(), Options{Conn: Conn{Brokers: c.Brokers}, Topic: topic, Start: Start{Kind: "oldest"}, Bounded: true})
	if err != nil {
		t.Fatal(err)
	}
	defer src.Close()
	got := readAll(t, src)
	sort.Strings(got)
	sort.Strings(want)
	if fmt.Sprint(got) != fmt.Sprint(want) {
		t.Fatalf("read\n%v\nwant\n%v", got, want)
	}
}

func TestParseStart(t *testing.T) {
	now := time.Date(2026, 12, 2, 7, 0, 0, 0, time.UTC)
	for in, want := range map[string]Start{
		"newest":               {Kind: "newest"},
		"oldest":               {Kind: "oldest"},
		"1200":                 {Kind: "offset", Offset: 1200},
		"2026-12-02T06:00:00Z": {Kind: "time", Time: now.Add(-time.Hour)},
		"15m":                  {Kind: "time", Time: now.Add(-15 * time.Minute)},
	} {
		got, err := ParseStart(in, now)
		if err != nil || got.Kind != want.Kind || got.Offset != want.Offset || !got.Time.Equal(want.Time) {
			t.Errorf("ParseStart(%q) = %+v, %v; want %+v", in, got, err, want)
		}
	}
	for _, bad := range []string{"-3", "yesterday", "-5m"} {
		if _, err := ParseStart(bad, now); err == nil {
			t.Errorf("ParseStart(%q) gave no error", bad)
		}
	}
}
