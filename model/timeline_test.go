package model_test

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"reflect"
	"testing"

	"bitsift/demo"
	"bitsift/ingest"
	"bitsift/model"
)

func timelineOf(t *testing.T, lines func(i int64) []byte, n int64, file string) []model.TimelineEntry {
	t.Helper()
	in, err := ingest.New(ingest.Config{Model: model.Options{Window: model.Window{Kind: model.WindowAll}}})
	if err != nil {
		t.Fatal(err)
	}
	for i := int64(1); i <= n; i++ {
		in.Line(lines(i), i, file)
	}
	in.Flush()
	return in.Model().Timeline(in.Snapshot(model.SnapshotOptions{}), []string{file})
}

// TestTimelineDemoIncident: with no baseline, the change points of the demo
// stream find the rule route → upstream breaking where the package demo
// says the incident runs (records 70,000 to 100,000 counted from 0, so
// lines 70,001–100,000), within 2% of each end, and nothing outside it.
func TestTimelineDemoIncident(t *testing.T) {
	if testing.Short() {
		t.Skip("reads 200,000 demo lines per seed")
	}
	for _, seed := range []uint64{1, 2} {
		g := demo.New(seed, 200_000)
		tl := timelineOf(t, func(int64) []byte { return g.Append(nil) }, 200_000, "demo.jsonl")
		start, end := float64(demo.IncidentStart+1), float64(demo.IncidentEnd)
		found := false
		for _, e := range tl {
			if e.Kind == model.TimelineBroken && e.Field == "upstream" && e.Given == "route" {
				found = true
				if d := float64(e.First.Line) - start; d < -0.02*start || d > 0.02*start {
					t.Errorf("seed %d: rule broke at line %d, incident starts at %.0f", seed, e.First.Line, start)
				}
				if d := float64(e.Last.Line) - end; d < -0.02*end || d > 0.02*end {
					t.Errorf("seed %d: rule healed after line %d, incident ends at %.0f", seed, e.Last.Line, end)
				}
				if e.First.File != "demo.jsonl" || e.First.Time == 0 {
					t.Errorf("seed %d: trace %+v", seed, e.First)
				}
			}
			if float64(e.First.Line) < 0.98*start || float64(e.First.Line) > end {
				t.Errorf("seed %d: %+v outside the incident", seed, e)
			}
		}
		if !found {
			t.Errorf("seed %d: no broken rule upstream|route in %+v", seed, tl)
		}
	}
}

// TestTimelineGoneAndNew: a field logged on every line until line 5,000
// and never after is gone from line 5,001 to the end (10,000); one logged
// from line 3,001 on is new there. The lines are the generator's own.
func TestTimelineGoneAndNew(t *testing.T) {
	line := func(i int64) []byte {
		s := fmt.Sprintf(`{"berth":"b%d","tide":"%s"`, i%7, []string{"ebb", "flood"}[i%2])
		if i <= 5000 {
			s += fmt.Sprintf(`,"pilot":"p%d"`, i%5)
		}
		if i > 3000 {
			s += `,"crane":"c1"`
		}
		return []byte(s + "}")
	}
	tl := timelineOf(t, line, 10_000, "quay.log")
	want := map[string]model.TimelineEntry{
		"pilot": {Kind: model.TimelineGone, Field: "pilot", Count: 5000},
		"crane": {Kind: model.TimelineNew, Field: "crane", Count: 7000},
	}
	lines := map[string][2]int64{"pilot": {5001, 10000}, "crane": {3001, 10000}}
	got := map[string]bool{}
	for _, e := range tl {
		w, ok := want[e.Field]
		if !ok {
			t.Errorf("unexpected %+v", e)
			continue
		}
		got[e.Field] = true
		if e.Kind != w.Kind || e.Count != w.Count || e.First.Line != lines[e.Field][0] || e.Last.Line != lines[e.Field][1] || e.First.File != "quay.log" {
			t.Errorf("%s: %+v, want %s lines %v count %d", e.Field, e, w.Kind, lines[e.Field], w.Count)
		}
	}
	if len(got) != 2 {
		t.Errorf("timeline %+v lacks pilot gone or crane new", tl)
	}
}

// TestCUSUMStep: a series at 0 with a step to 10 from index 40 to 59 is one
// stretch [40, 60) (worked by hand: S passes h = 8 in the first raised
// chunk, and D in the first chunk back).
func TestCUSUMStep(t *testing.T) {
	x := make([]float64, 100)
	for i := range x {
		x[i] = float64(i%3) * 0.1
		if i >= 40 && i < 60 {
			x[i] += 10
		}
	}
	segs := model.CUSUMSegmentsForTest(x, 0.1)
	if len(segs) != 1 || segs[0] != [2]int{40, 60} {
		t.Errorf("segments %v, want [[40 60]]", segs)
	}
}

// BenchmarkTimeline: the timeline of 200,000 demo records (a report's
// extra scan), against the deep snapshot a report takes anyway.
func BenchmarkTimeline(b *testing.B) {
	in, _ := ingest.New(ingest.Config{Model: model.Options{Window: model.Window{Kind: model.WindowAll}}})
	g := demo.New(1, 200_000)
	for i := int64(1); i <= 200_000; i++ {
		in.Line(g.Append(nil), i, "demo")
	}
	in.Flush()
	s := in.Snapshot(model.SnapshotOptions{})
	b.Run("timeline", func(b *testing.B) {
		for range b.N {
			in.Model().Timeline(s, []string{"demo"})
		}
	})
	b.Run("deep-snapshot", func(b *testing.B) {
		for range b.N {
			in.Snapshot(model.SnapshotOptions{Deep: true, Profile: true})
		}
	})
}

// TestTimelineBesideDeep: a timeline made beside a Deep snapshot's analyses
// (SnapshotOptions.Timeline) is the one Model.Timeline makes after it
// (under -race, this also checks that the scans share the model safely).
func TestTimelineBesideDeep(t *testing.T) {
	var text []byte
	for i := 1; i <= 20_000; i++ {
		s := fmt.Sprintf(`{"berth":"b%d","tide":"%s","crane":"c%d"`, i%7, []string{"ebb", "flood"}[i%2], i%7%3)
		if i <= 12_000 {
			s += fmt.Sprintf(`,"pilot":"p%d"`, i%5)
		}
		if i > 15_000 && i%7 == 1 {
			s = `{"berth":"b1","tide":"ebb","crane":"c2"` // a stretch of other tides and cranes
		}
		text = append(text, s+"}\n"...)
	}
	path := filepath.Join(t.TempDir(), "quay.log")
	if err := os.WriteFile(path, text, 0o644); err != nil {
		t.Fatal(err)
	}
	in, err := ingest.New(ingest.Config{Model: model.Options{Window: model.Window{Kind: model.WindowAll}}})
	if err != nil {
		t.Fatal(err)
	}
	if err := in.ReadFiles(context.Background(), []string{path}); err != nil && !errors.Is(err, io.EOF) {
		t.Fatal(err)
	}
	snap := in.Snapshot(model.SnapshotOptions{Deep: true, Timeline: true})
	want := in.Model().Timeline(in.Snapshot(model.SnapshotOptions{Deep: true}), []string{path})
	if len(want) == 0 || want[0].First.File != path {
		t.Fatalf("the stream has no findings to compare, or they lack the file: %+v", want)
	}
	if !reflect.DeepEqual(snap.Timeline, want) {
		t.Errorf("beside the Deep analyses:\n%+v\nafter them:\n%+v", snap.Timeline, want)
	}
}
