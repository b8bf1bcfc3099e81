package ui

import (
	"context"
	"testing"
	"time"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"

	"bitsift/demo"
	"bitsift/ingest"
)

// liveModel is the screen over the demo stream paced at rate lines/s,
// with a first frame on show.
func liveModel(b *testing.B, rate float64) (Model, *LiveFeed) {
	in, err := ingest.New(ingest.Config{})
	if err != nil {
		b.Fatal(err)
	}
	live := StartLive(context.Background(), in, demo.NewSource(1, 0, rate))
	b.Cleanup(live.Stop)
	m := New(live, Options{Renderer: lipgloss.NewRenderer(discard{})})
	m = m.resize(120, 40)
	time.Sleep(500 * time.Millisecond) // let ingest get going
	f, err := live.Frame(context.Background(), m.snapshotOptions())
	if err != nil {
		b.Fatal(err)
	}
	return m.apply(f), live
}

// BenchmarkKeyUnderIngest is the time the UI goroutine spends on one key
// (Update and the redraw's View) while the demo streams in at 200,000
// lines/s on the other goroutines: the latency a key sees, less the
// terminal's own.
func BenchmarkKeyUnderIngest(b *testing.B) {
	m, live := liveModel(b, 200_000)
	keys := []tea.KeyMsg{
		{Type: tea.KeyDown}, {Type: tea.KeyDown}, {Type: tea.KeyTab}, {Type: tea.KeyRight},
		{Type: tea.KeyDown}, {Type: tea.KeyTab}, {Type: tea.KeyDown}, {Type: tea.KeyTab}, {Type: tea.KeyTab},
	}
	start, _ := live.Frame(context.Background(), m.snapshotOptions())
	t0 := time.Now()
	i := 0
	for b.Loop() {
		next, _ := m.Update(keys[i%len(keys)])
		m = next.(Model)
		_ = m.View()
		i++
	}
	end, _ := live.Frame(context.Background(), m.snapshotOptions())
	b.ReportMetric(float64(end.Snap.Input.Lines-start.Snap.Input.Lines)/time.Since(t0).Seconds(), "ingest-lines/s")
}

// BenchmarkFrameUnderIngest is one turn of the frame loop under the same
// load: request a frame, put it on show, draw. A key that arrives during
// it waits at most this long.
func BenchmarkFrameUnderIngest(b *testing.B) {
	m, live := liveModel(b, 200_000)
	for b.Loop() {
		f, err := live.Frame(context.Background(), m.snapshotOptions())
		if err != nil {
			b.Fatal(err)
		}
		m = m.apply(f)
		_ = m.View()
	}
}
