package ingest

import (
	"context"
	"testing"
	"time"

	"bitsift/demo"
	"bitsift/model"
	"bitsift/parse"
)

// waitEnded polls until the live reader has taken the whole source.
func waitEnded(t *testing.T, l *Live) *Frame {
	t.Helper()
	deadline := time.Now().Add(30 * time.Second)
	for time.Now().Before(deadline) {
		f, err := l.Frame(context.Background(), model.SnapshotOptions{})
		if err != nil {
			t.Fatal(err)
		}
		if f.Ended {
			return f
		}
		time.Sleep(20 * time.Millisecond)
	}
	t.Fatal("the live reader did not reach the end of a finite source")
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
