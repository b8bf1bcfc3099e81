package ui

import (
	"context"
	"errors"
	"sync"
	"testing"
	"time"

	"github.com/charmbracelet/lipgloss"

	"bitsift/demo"
	"bitsift/ingest"
	"bitsift/model"
	"bitsift/parse"
	"bitsift/plan"
)

// fixtureFrames are frames of the demo stream (seed 1) every 8,000 lines
// up to 96,000, into its incident (from line 70,001), with two rejected
// lines and one source event, and a baseline pinned at line 60,000; the
// last frame is deep. The same every run.
var fixtureFrames = sync.OnceValue(func() []*ingest.Frame { return fixture().frames })

// fixtureSample holds the last 4,000 lines of the fixture, raw.
var fixtureSample = sync.OnceValue(func() *plan.Sample { return fixture().sample })

type fixtureData struct {
	frames []*ingest.Frame
	sample *plan.Sample
}

var fixture = sync.OnceValue(func() fixtureData {
	in, err := ingest.New(ingest.Config{})
	if err != nil {
		panic(err)
	}
	in.AddSource("demo")
	g := demo.New(1, 0)
	var buf []byte
	var frames []*ingest.Frame
	var bytes int64
	event := parse.SourceEvent{
		Time: time.Date(2026, 3, 14, 6, 0, 41, 0, time.UTC), Kind: "rotated", Detail: "quayside.log → quayside.log.1",
	}
	smp := plan.NewSample(6000) // past plan.MinReductionRecords, so record classes show
	for n := int64(1); n <= 96_000; n++ {
		if n == 60_001 {
			in.PinBaseline()
		}
		switch n {
		case 5000:
			in.Line([]byte(`{"ts":"2026-03-14T06:00:02Z","level":"info","svc":"quay`), n, "demo")
		case 5001:
			in.Line([]byte("\x1b[31mnot a record\x1b[0m"), n, "demo")
		default:
			buf = g.Append(buf[:0])
			bytes += int64(len(buf)) + 1
			in.Line(buf, n, "demo")
			smp.Add(buf)
		}
		if n%8000 == 0 {
			in.Flush()
			deep := n == 96_000
			f := &ingest.Frame{
				Snap: in.Snapshot(model.SnapshotOptions{TopValues: topValues, Detail: "upstream", DetailRows: 12, DetailTop: 6,
					Deep: deep, Surprising: surprisingShown}),
				Deep: deep, Baseline: in.Model().BaselineMode(),
				Source: parse.SourceStatus{
					Name: "demo (quayside)", State: parse.StateLive, BytesRead: bytes, Lines: n,
					Note: "incident from line 70,001 (35s in)",
				},
				LinesPerSec: 2000, RecordsPerSec: 2000, BytesPerSec: 2000 * 260,
			}
			if n >= 48_000 {
				f.Source.Events = []parse.SourceEvent{event}
			}
			frames = append(frames, f)
		}
	}
	return fixtureData{frames, smp}
})

// staticFeed hands out one frame, whatever is asked.
type staticFeed struct {
	mu        sync.Mutex
	frame     *ingest.Frame
	windows   []model.Window
	baselines []ingest.BaselineChoice
	sample    *plan.Sample // nil: Sample fails
	pacer     ingest.Pacer
	asked     []model.SnapshotOptions // every frame request
}

func (s *staticFeed) SetBaseline(b ingest.BaselineChoice) {
	s.mu.Lock()
	s.baselines = append(s.baselines, b)
	s.mu.Unlock()
}

func (s *staticFeed) Sample(ctx context.Context) (*plan.Sample, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.sample == nil {
		return nil, errors.New("no sample in this test")
	}
	return s.sample.Clone(), nil
}

func (s *staticFeed) Pacer() ingest.Pacer { return s.pacer }

// fixtureNow is the fixed clock of the fixture screens: the time of the
// last frame's snapshot.
func fixtureNow() time.Time {
	f := fixtureFrames()
	return f[len(f)-1].Snap.Taken
}

func (s *staticFeed) Frame(ctx context.Context, opt model.SnapshotOptions) (*ingest.Frame, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	s.asked = append(s.asked, opt)
	return s.frame, nil
}

func (s *staticFeed) SetWindow(w model.Window) {
	s.mu.Lock()
	s.windows = append(s.windows, w)
	s.mu.Unlock()
}

// fixtureModel is the screen at w×h after every fixture frame.
func fixtureModel(t testing.TB, w, h int) (Model, *staticFeed) {
	t.Helper()
	frames := fixtureFrames()
	feed := &staticFeed{frame: frames[len(frames)-1]}
	m := New(feed, Options{HistoryEvery: -1, Renderer: lipgloss.NewRenderer(discard{}), Clock: fixtureNow})
	m = m.resize(w, h)
	for _, f := range frames {
		m = m.apply(f)
	}
	return m, feed
}

type discard struct{}

func (discard) Write(p []byte) (int, error) { return len(p), nil }
