package ingest

import (
	"context"
	"errors"
	"fmt"
	"io"
	"reflect"
	"strings"
	"testing"
	"time"

	"bitsift/demo"
	"bitsift/model"
	"bitsift/parse"
)

// waitEnded polls until the live reader has taken the whole source.
func waitEnded(t *testing.T, l *Live) *Frame {
	t.Helper()
	return waitFrame(t, l, "did not reach the end of a finite source", func(f *Frame) bool { return f.Ended })
}

// waitLines polls until the live reader has taken n lines.
func waitLines(t *testing.T, l *Live, n int64) {
	t.Helper()
	waitFrame(t, l, fmt.Sprintf("did not take %d lines", n), func(f *Frame) bool { return f.Snap.Input.Lines >= n })
}

// waitFrame polls the live reader's frames until one satisfies done, for
// at most 30 s.
func waitFrame(t *testing.T, l *Live, what string, done func(*Frame) bool) *Frame {
	t.Helper()
	deadline := time.Now().Add(30 * time.Second)
	for time.Now().Before(deadline) {
		f, err := l.Frame(context.Background(), model.SnapshotOptions{})
		if err != nil {
			t.Fatal(err)
		}
		if done(f) {
			return f
		}
		time.Sleep(20 * time.Millisecond)
	}
	t.Fatal("the live reader " + what)
	return nil
}

func TestLiveReadsEverything(t *testing.T) {
	in, err := New(Config{})
	if err != nil {
		t.Fatal(err)
	}
	const n = 30_000
	l := StartLive(context.Background(), in, demo.NewSource(3, n, 0))
	defer l.Stop()
	f := waitEnded(t, l)
	// Lines read = records + rejected, always (DEVELOPERS.md).
	if f.Snap.Input.Lines != n || int64(f.Snap.Records)+f.Snap.Input.Rejected != n {
		t.Fatalf("lines %d, records %d, rejected %d; want %d lines, all records",
			f.Snap.Input.Lines, f.Snap.Records, f.Snap.Input.Rejected, n)
	}
	if f.Source.State != parse.StateDone || f.Source.Lines != n {
		t.Errorf("source status = %+v, want done after %d lines", f.Source, n)
	}
	if i := f.Snap.Index("zone"); i < 0 || f.Snap.Fields[i].BestGiven != "host" {
		t.Errorf("zone is not explained by host: %+v", f.Snap.Fields)
	}

	t.Run("window change", func(t *testing.T) {
		l.SetWindow(model.Window{Kind: model.WindowRecords, Records: 10_000})
		var f *Frame
		for range 500 {
			f, _ = l.Frame(context.Background(), model.SnapshotOptions{})
			if f.Snap.Window.Kind == model.WindowRecords {
				break
			}
			time.Sleep(10 * time.Millisecond)
		}
		if f.Snap.Records != 10_000 || f.Snap.Seen != n || f.Snap.Input.Lines != n {
			t.Errorf("after the change: %d records, %d seen, %d lines; want 10000, %d, %d",
				f.Snap.Records, f.Snap.Seen, f.Snap.Input.Lines, n, n)
		}
	})
	t.Run("detail", func(t *testing.T) {
		f, _ := l.Frame(context.Background(), model.SnapshotOptions{Detail: "zone"})
		if f.Snap.Detail == nil || f.Snap.Detail.Given != "host" {
			t.Fatalf("detail of zone = %+v, want given host", f.Snap.Detail)
		}
		for _, r := range f.Snap.Detail.Rows {
			if len(r.Top) != 1 || r.Entropy > 1e-9 {
				t.Errorf("zone given host=%s: %v, want one zone (host determines zone)", r.Given.Value, r.Top)
			}
		}
	})
}

func TestLiveStopsWhileWaiting(t *testing.T) {
	in, _ := New(Config{})
	l := StartLive(context.Background(), in, demo.NewSource(1, 0, 100))
	if _, err := l.Frame(context.Background(), model.SnapshotOptions{}); err != nil {
		t.Fatal(err)
	}
	l.Stop()
	if _, err := l.Frame(context.Background(), model.SnapshotOptions{}); err != ErrStopped {
		t.Errorf("Frame after Stop: %v, want ErrStopped", err)
	}
}

// BenchmarkFrame measures a frame of a 100,000-record demo window: the
// time a snapshot holds up ingest (see Frame.Cost).
func BenchmarkFrame(b *testing.B) {
	in, _ := New(Config{})
	l := StartLive(context.Background(), in, demo.NewSource(1, 100_000, 0))
	defer l.Stop()
	for {
		f, _ := l.Frame(context.Background(), model.SnapshotOptions{})
		if f.Ended {
			break
		}
		time.Sleep(50 * time.Millisecond)
	}
	var cost time.Duration
	b.ResetTimer()
	for b.Loop() {
		f, err := l.Frame(context.Background(), model.SnapshotOptions{TopValues: 16, Detail: "upstream"})
		if err != nil {
			b.Fatal(err)
		}
		cost += f.Cost
	}
	b.ReportMetric(float64(cost.Microseconds())/float64(b.N), "µs-stall/frame")
}

// BenchmarkLiveIngest is the rate of the whole live path, demo lines
// through reader, handoff, parse and model.
func BenchmarkLiveIngest(b *testing.B) {
	for b.Loop() {
		in, _ := New(Config{})
		l := StartLive(context.Background(), in, demo.NewSource(1, 50_000, 0))
		for {
			f, _ := l.Frame(context.Background(), model.SnapshotOptions{TopValues: -1})
			if f.Ended {
				break
			}
			time.Sleep(5 * time.Millisecond)
		}
		l.Stop()
	}
	b.ReportMetric(50_000*float64(b.N)/b.Elapsed().Seconds(), "lines/s")
}

// memSource hands out lines from memory, with a fault before line
// faultAt (0: none), as fast as they are asked for, except that it waits
// for gates[i], when there is one, before it hands out line i+1. With n
// set it hands out n lines, going round lines.
type memSource struct {
	lines   []string
	n       int
	faultAt int
	gates   map[int]chan struct{}
	eof     chan struct{} // closed at the end, when not nil
	i       int
	faulted bool
}

func (s *memSource) Next(ctx context.Context) (parse.Line, error) {
	if s.i == s.faultAt && s.faultAt > 0 && !s.faulted {
		s.faulted = true
		return parse.Line{}, errors.New("the disk hiccupped")
	}
	if s.n == 0 {
		s.n = len(s.lines)
	}
	if s.i == s.n {
		if s.eof != nil {
			close(s.eof)
			s.eof = nil
		}
		return parse.Line{}, io.EOF
	}
	if g := s.gates[s.i]; g != nil {
		select {
		case <-g:
		case <-ctx.Done():
			return parse.Line{}, ctx.Err()
		}
	}
	s.i++
	return parse.Line{Text: []byte(s.lines[(s.i-1)%len(s.lines)]), Num: int64(s.i), Source: "mem"}, nil
}

func (s *memSource) Status() parse.SourceStatus { return parse.SourceStatus{Name: "mem"} }
func (s *memSource) Close() error               { return nil }

// TestLiveEqualsSequential: the live runner, which takes lines in batches
// handed over between goroutines, gives the same figures and the same
// accounting (lines, rejections and their examples, faults, warnings) as
// reading the source line by line, on a stream with rejected, blank and
// too long lines, a fault, and a change of shape from JSON to logfmt (read
// again by detection after a run of rejections) with records that have no
// time. Batch boundaries fall where they would be easiest to get wrong:
// between two runs of rejections that only the records between them keep
// from making detection look again.
func TestLiveEqualsSequential(t *testing.T) {
	g := demo.New(5, 20000)
	var lines []string
	var gates []int // the live run hands these lines over in a batch of their own
	for i := range 20000 {
		lines = append(lines, string(g.Append(nil)))
		if i == 8000 || i == 14000 {
			// Two runs of lines JSON cannot read, each shorter than
			// the run that makes detection look again, with clean
			// records between them, which break the run. The first
			// run ends a batch and the second begins one, so that
			// only whole batches of records between them break it.
			if i == 14000 {
				gates = append(gates, len(lines))
			}
			for j := range 20 {
				lines = append(lines, fmt.Sprintf("wharf=%d crane=idle", j))
			}
			if i == 8000 {
				gates = append(gates, len(lines))
			}
		}
		if i >= 3000 {
			continue // then clean lines, several batches of them
		}
		switch i % 997 {
		case 5:
			lines = append(lines, "not json at all")
		case 6:
			lines = append(lines, "   ")
		case 7:
			lines = append(lines, `{"host":"`+strings.Repeat("x", 700)+`"}`)
		case 8:
			lines = append(lines, `{"host":"broken`)
		}
	}
	for i := range 9000 {
		l := fmt.Sprintf("level=info host=qs-%d route=/v1/r%d status=%d", i%7, i%5, 200+i%3)
		if i%10 != 0 { // every tenth record has no time: it gets the clock's
			l = fmt.Sprintf("ts=2026-03-14T07:%02d:%02d.%03dZ ", i/3600%60, i/60%60, i%1000) + l
		}
		lines = append(lines, l)
	}

	for _, w := range []model.Window{{Kind: model.WindowAll}, {Kind: model.WindowRecords, Records: 1500}} {
		t.Run(w.String(), func(t *testing.T) {
			newIn := func() *Ingester {
				clock := time.Unix(1e9, 0)
				in, err := New(Config{MaxLine: 600, Model: model.Options{Window: w},
					Clock: func() time.Time { clock = clock.Add(time.Millisecond); return clock }})
				if err != nil {
					t.Fatal(err)
				}
				return in
			}
			ref := newIn()
			ref.AddSource("mem")
			if err := ref.ReadSource(context.Background(), &memSource{lines: lines, faultAt: 2500}); err == nil {
				t.Fatal("the reference read no fault")
			}
			want := ref.Snapshot(model.SnapshotOptions{})

			in := newIn()
			src := &memSource{lines: lines, faultAt: 2500, gates: map[int]chan struct{}{}}
			for _, i := range gates {
				src.gates[i] = make(chan struct{})
			}
			l := StartLive(context.Background(), in, src)
			for _, i := range gates {
				waitLines(t, l, int64(i))
				close(src.gates[i])
			}
			waitEnded(t, l)
			got, err := l.Frame(context.Background(), model.SnapshotOptions{})
			if err != nil {
				t.Fatal(err)
			}
			l.Stop()

			if want.Input.Format != "json+logfmt" || len(want.Input.Faults) != 1 || want.Input.Rejected < 40 {
				t.Fatalf("reference: format %q, faults %q, %d rejected: the test input is not what it should be",
					want.Input.Format, want.Input.Faults, want.Input.Rejected)
			}
			if g, w := in.Warnings(), ref.Warnings(); !reflect.DeepEqual(g, w) {
				t.Errorf("warnings %q, want %q", g, w)
			}
			sameFigures(t, got.Snap, want)
		})
	}
}

// BenchmarkLiveWindow is the rate of the live path without a screen: demo
// lines made beforehand (the reader costs what a file's does), watch's
// window of the last 100,000 records, a million lines (all but the first
// 100,000 evict one), no frames asked for until the end. Its lines/s is
// what the reader and owner goroutines sustain; with no baseline, and
// with the rolling one that watch and demo compare with unless given
// --baseline.
func BenchmarkLiveWindow(b *testing.B) {
	const n = 1_000_000
	g := demo.New(1, 0)
	lines := make([]string, 250_000)
	for i := range lines {
		lines[i] = string(g.Append(nil))
	}
	for _, rolling := range []bool{false, true} {
		name := "baseline=none"
		if rolling {
			name = "baseline=rolling"
		}
		b.Run(name, func(b *testing.B) {
			for b.Loop() {
				in, _ := New(Config{Model: model.Options{Window: model.Window{Kind: model.WindowRecords, Records: 100_000}}})
				if rolling {
					in.UseRollingBaseline()
				}
				src := &memSource{lines: lines, n: n, eof: make(chan struct{})}
				eof := src.eof
				l := StartLive(context.Background(), in, src)
				<-eof
				for ended := false; !ended; time.Sleep(time.Millisecond) {
					// A frame would hold up ingest for a snapshot: look only.
					l.Visit(context.Background(), func() { ended = l.ended })
				}
				l.Stop()
			}
			b.ReportMetric(n*float64(b.N)/b.Elapsed().Seconds(), "lines/s")
		})
	}
}
