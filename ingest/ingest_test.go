package ingest

import (
	"context"
	"fmt"
	"math/rand/v2"
	"strings"
	"testing"
	"time"

	"bitsift/model"
)

func ingestText(t *testing.T, cfg Config, text string) *model.Snapshot {
	t.Helper()
	cfg.Clock = func() time.Time { return time.Unix(1740895200, 0) }
	in, err := New(cfg)
	if err != nil {
		t.Fatal(err)
	}
	in.cfg.Stdin = strings.NewReader(text)
	if err := in.ReadFiles(context.Background(), []string{"-"}); err != nil {
		t.Fatal(err)
	}
	return in.Snapshot(model.SnapshotOptions{TopValues: 20})
}

// Partial CRI lines are counted as parts: lines = records + rejected +
// parts, and the record left open at the end of the stream still counts.
func TestCRIAccounting(t *testing.T) {
	text := strings.Join([]string{
		`2025-03-02T06:00:00Z stdout P {"zone":`,
		`2025-03-02T06:00:01Z stdout F "north"}`,
		`2025-03-02T06:00:02Z stderr F fan 3 stalled`,
		`2025-03-02T06:00:03Z bogus F x`,
		`2025-03-02T06:00:04Z stdout P tail `,
		`2025-03-02T06:00:05Z stdout P without end`,
	}, "\n")
	s := ingestText(t, Config{}, text)
	if s.Input.Format != "cri" {
		t.Fatalf("format %s", s.Input.Format)
	}
	// 6 lines: records {zone}, {fan}, {tail without end}; 1 rejected; the
	// first P and the first of the last two P lines are parts.
	if s.Seen != 3 || s.Input.Rejected != 1 || s.Input.Parts != 2 || s.Input.Lines != 6 {
		t.Fatalf("seen %d, rejected %d, parts %d, lines %d; want 3, 1, 2, 6", s.Seen, s.Input.Rejected, s.Input.Parts, s.Input.Lines)
	}
	if s.Seen+s.Input.Rejected+s.Input.Parts != s.Input.Lines {
		t.Error("lines != records + rejected + parts")
	}
	logs := map[string]bool{}
	for _, v := range s.Fields[s.Index("log")].Top {
		logs[v.Value] = true
	}
	if !logs["tail without end"] || !logs["fan 3 stalled"] {
		t.Errorf("log values %v", logs)
	}
	if i := s.Index("zone"); i < 0 || s.Fields[i].Top[0].Value != "north" && s.Fields[i].Top[1].Value != "north" {
		t.Errorf("joined JSON not read: %+v", s.Fields)
	}
}

// A numeric field with many values and a message field get companions,
// marked synthetic; a status-like field does not.
func TestCompanions(t *testing.T) {
	var b strings.Builder
	for i := 0; i < 200; i++ {
		fmt.Fprintf(&b, "zone=%s status=%d latency_ms=%d msg=\"mister %d on in zone %s\"\n",
			[]string{"north", "south"}[i%2], []int{200, 503}[i%7/6], 3+i*i%977, i%5, []string{"north", "south"}[i%2])
	}
	s := ingestText(t, Config{}, b.String())
	for _, c := range []struct {
		name, source string
	}{{"latency_ms~log", "latency_ms"}, {"msg~template", "msg"}} {
		i := s.Index(c.name)
		if i < 0 {
			t.Fatalf("no %s among %d fields", c.name, len(s.Fields))
		}
		f := s.Fields[i]
		if f.Synthetic == nil || f.Synthetic.Source != c.source || f.Present != 200 {
			t.Errorf("%s: synthetic %+v, present %d", c.name, f.Synthetic, f.Present)
		}
	}
	for _, n := range []string{"status~log", "zone~template", "latency_ms~template"} {
		if s.Index(n) >= 0 {
			t.Errorf("unexpected companion %s", n)
		}
	}
	if f := s.Fields[s.Index("msg~template")]; f.Distinct != 1 || f.Top[0].Value != "#1 mister <num> on in zone <*>" {
		t.Errorf("templates %+v", f.Top)
	}
	if f := s.Fields[s.Index("latency_ms")]; f.Synthetic != nil {
		t.Error("raw field marked synthetic")
	}
	none := ingestText(t, Config{NoCompanions: true}, b.String())
	if none.Index("msg~template") >= 0 {
		t.Error("NoCompanions still adds companions")
	}
}

func TestPatternConfig(t *testing.T) {
	s := ingestText(t, Config{Pattern: `^(?P<zone>\w+) (?P<rh>\d+)$`}, "north 71\nsouth 80\nbad line here\n")
	if s.Input.Format != "pattern" || s.Seen != 2 || s.Input.Rejected != 1 {
		t.Fatalf("format %s, seen %d, rejected %d", s.Input.Format, s.Seen, s.Input.Rejected)
	}
	for _, cfg := range []Config{{Format: "pattern"}, {Pattern: `(x)`}, {Pattern: `(?P<a>x)`, Format: "json"}} {
		if _, err := New(cfg); err == nil {
			t.Errorf("New(%+v) accepted", cfg)
		}
	}
}

// TestNoiseIsNoFormat: random bytes match no format well; rather than
// reading the best of poor matches as records, every line is rejected.
func TestNoiseIsNoFormat(t *testing.T) {
	r := rand.New(rand.NewPCG(9, 9))
	var b strings.Builder
	for i := 0; i < 500; i++ {
		for j := 0; j < 60; j++ {
			c := byte(r.IntN(256))
			if c == '\n' {
				c = '='
			}
			b.WriteByte(c)
		}
		b.WriteByte('\n')
	}
	s := ingestText(t, Config{}, b.String())
	if s.Records != 0 || s.Input.Rejected != 500 || s.Input.Format != "unknown" {
		t.Errorf("format %s (%.2f): %d records, %d rejected; want unknown, 0 and 500",
			s.Input.Format, s.Input.Confidence, s.Records, s.Input.Rejected)
	}
}
