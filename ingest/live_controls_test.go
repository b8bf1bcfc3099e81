package ingest

import (
	"context"
	"io"
	"testing"
	"time"

	"bitsift/demo"
	"bitsift/ingest/raw"
	"bitsift/model"
	"bitsift/parse"
)

// eventSource is a finite demo source that reports a rotation event, as a
// follower would.
type eventSource struct {
	parse.Source
	ev parse.SourceEvent
}

func (e *eventSource) Status() parse.SourceStatus {
	s := e.Source.Status()
	s.Events = append(s.Events, e.ev)
	return s
}

// frameWhen polls frames until ok holds.
func frameWhen(t *testing.T, l *Live, opt model.SnapshotOptions, ok func(*Frame) bool) *Frame {
	t.Helper()
	deadline := time.Now().Add(30 * time.Second)
	for time.Now().Before(deadline) {
		f, err := l.Frame(context.Background(), opt)
		if err != nil {
			t.Fatal(err)
		}
		if ok(f) {
			return f
		}
		time.Sleep(10 * time.Millisecond)
	}
	t.Fatal("the live reader never reached the state the test waits for")
	return nil
}

// TestLiveControls: the source's events reach the snapshot's input
// accounting; a pinned baseline survives a window change; every line
// is kept raw with its number, read back on the owner goroutine.
func TestLiveControls(t *testing.T) {
	in, err := New(Config{})
	if err != nil {
		t.Fatal(err)
	}
	const n = 20_000
	ev := parse.SourceEvent{Time: time.Unix(1, 0), Kind: "rotated", Detail: "a → a.1"}
	var taken int
	var newest []raw.Line
	l := StartLiveWith(context.Background(), in, &eventSource{Source: demo.NewSource(2, n, 0), ev: ev},
		LiveOptions{RawLines: n})
	defer l.Stop()
	f := waitEnded(t, l)
	if len(f.Snap.Input.Events) != 1 || f.Snap.Input.Events[0] != ev {
		t.Errorf("snapshot events = %v, want the source's %v", f.Snap.Input.Events, ev)
	}
	if l.Pacer() != nil {
		t.Error("a demo source is not paced, yet the Live offers a Pacer")
	}

	l.SetBaseline(PinWindow)
	f = frameWhen(t, l, model.SnapshotOptions{}, func(f *Frame) bool { return f.Baseline == model.BaselineFixed })
	if f.Snap.Changes == nil || f.Snap.Changes.Baseline == nil || f.Snap.Changes.Baseline.Records != n {
		t.Fatalf("after pinning: changes %+v, want a baseline of %d records", f.Snap.Changes, n)
	}
	l.SetWindow(model.Window{Kind: model.WindowRecords, Records: 5_000})
	f = frameWhen(t, l, model.SnapshotOptions{}, func(f *Frame) bool { return f.Snap.Window.Kind == model.WindowRecords })
	if f.Baseline != model.BaselineFixed || f.Snap.Changes == nil || f.Snap.Changes.Baseline.Records != n {
		t.Errorf("the pinned baseline did not survive the window change: mode %v, changes %+v", f.Baseline, f.Snap.Changes)
	}
	l.SetBaseline(Rolling)
	frameWhen(t, l, model.SnapshotOptions{}, func(f *Frame) bool { return f.Baseline == model.BaselineRolling })

	if err := l.Visit(context.Background(), func() { taken, newest = in.Raw().Len(), in.Raw().Newest(1) }); err != nil {
		t.Fatal(err)
	}
	if taken != n || len(newest) != 1 || newest[0].Num != n {
		t.Errorf("%d raw lines kept, the newest %+v; want all %d, the last numbered %d", taken, newest, n, n)
	}
}

// pacedSource is a finite source with a Pacer and an ETA.
type pacedSource struct {
	parse.Source
	paused bool
}

func (p *pacedSource) Pause()                     { p.paused = true }
func (p *pacedSource) Resume()                    { p.paused = false }
func (p *pacedSource) Step(int)                   {}
func (p *pacedSource) Paused() bool               { return p.paused }
func (p *pacedSource) ETA() (time.Duration, bool) { return 42 * time.Second, true }
func (p *pacedSource) Next(ctx context.Context) (parse.Line, error) {
	<-ctx.Done() // never ends, so the ETA stays on offer
	return parse.Line{}, io.EOF
}

func TestLivePacerAndETA(t *testing.T) {
	in, _ := New(Config{})
	src := &pacedSource{Source: demo.NewSource(1, 1, 0)}
	l := StartLive(context.Background(), in, src)
	defer l.Stop()
	if l.Pacer() == nil {
		t.Fatal("a paced source gives no Pacer")
	}
	f, err := l.Frame(context.Background(), model.SnapshotOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if !f.HasETA || f.ETA != 42*time.Second {
		t.Errorf("frame ETA = %v (%v), want the source's 42s", f.ETA, f.HasETA)
	}
}

// BenchmarkFrameDeep measures frames of a 100,000-record demo window with
// a pinned baseline: every frame (shallow: shifts and broken rules), and
// the deep one the Drift screen asks for every few seconds.
func BenchmarkFrameDeep(b *testing.B) {
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
	l.SetBaseline(PinWindow)
	for _, deep := range []bool{false, true} {
		name := "shallow"
		if deep {
			name = "deep"
		}
		b.Run(name, func(b *testing.B) {
			var cost time.Duration
			for b.Loop() {
				f, err := l.Frame(context.Background(), model.SnapshotOptions{TopValues: 16, Deep: deep, Surprising: 12})
				if err != nil {
					b.Fatal(err)
				}
				cost += f.Cost
			}
			b.ReportMetric(float64(cost.Microseconds())/float64(b.N), "µs-stall/frame")
		})
	}
}
