package plan

import (
	"testing"

	"bitsift/demo"
	"bitsift/ingest"
	"bitsift/model"
)

// demoPlan reads n demo lines into a model and a sample and makes a plan.
func demoPlan(t testing.TB, n int64, opt Options) *Plan {
	t.Helper()
	in, err := ingest.New(ingest.Config{Model: model.Options{Window: model.Window{Kind: model.WindowAll}}})
	if err != nil {
		t.Fatal(err)
	}
	smp := NewSample(0)
	g := demo.New(1, n)
	var buf []byte
	for i := int64(1); i <= n; i++ {
		buf = g.Append(buf[:0])
		in.Line(buf, i, "demo")
		smp.Add(buf)
	}
	in.Flush()
	opt.RecordTimes = in.TimeKey() != ""
	p, err := Make(in.Snapshot(model.SnapshotOptions{}), smp, opt)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// TestDemoPlan: the demo stream's invented relations (see package demo)
// are the reference. Its constant and its derived fields go, their
// determinants stay, and all of them rebuild exactly.
func TestDemoPlan(t *testing.T) {
	p := demoPlan(t, 20_000, Options{})
	for _, c := range []struct {
		field  string
		action Action
	}{
		{"svc", Drop}, {"zone", Derive}, {"region", Derive}, {"method", Derive}, {"level", Derive},
		{"host", Keep}, {"route", Keep}, {"status", Keep}, {"req_id", Keep}, {"upstream", Keep},
		{"latency_ms", Keep}, {"account", Keep}, {"ts", Keep},
	} {
		t.Run(c.field, func(t *testing.T) {
			f := p.Field(c.field)
			if f == nil {
				t.Fatal("not in the plan")
			}
			if f.Action != c.action {
				t.Errorf("action %s (%s), want %s", f.Action, f.Reason, c.action)
			}
			if f.Mismatches != 0 {
				t.Errorf("%d mismatches", f.Mismatches)
			}
		})
	}
	if !p.Lossless || p.BitsLost != 0 || p.Measured.Mismatches != 0 || p.Measured.KeptChanged != 0 {
		t.Errorf("lossless %v, bits lost %v, mismatches %d, kept changed %d", p.Lossless, p.BitsLost, p.Measured.Mismatches, p.Measured.KeptChanged)
	}
	m := p.Measured
	t.Logf("before %+v after %+v tables %+v rate %v bound %v→%v notes %v", m.Before, m.After, m.Tables, p.RecordsPerSecond, p.EntropyBefore, p.EntropyAfter, p.Notes)
	for _, f := range p.Fields {
		t.Logf("%-14s %-7s %-40s H=%.3f sH=%.3f L=%.3f table=%d", f.Name, f.Action, f.Reason, f.Entropy, f.SampleEntropy, f.Huffman, f.TableEntries)
	}
}

// BenchmarkMake is the plan of 20,000 demo records: choose, serialise
// twice, compress, rebuild.
func BenchmarkMake(b *testing.B) {
	in, _ := ingest.New(ingest.Config{})
	smp := NewSample(0)
	g := demo.New(1, 20_000)
	for i := int64(1); i <= 20_000; i++ {
		l := g.Append(nil)
		in.Line(l, i, "demo")
		smp.Add(l)
	}
	in.Flush()
	snap := in.Snapshot(model.SnapshotOptions{})
	b.ResetTimer()
	for b.Loop() {
		if _, err := Make(snap, smp, Options{}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkChoose is what the plan screen pays per pin change.
func BenchmarkChoose(b *testing.B) {
	in, _ := ingest.New(ingest.Config{})
	g := demo.New(1, 20_000)
	for i := int64(1); i <= 20_000; i++ {
		in.Line(g.Append(nil), i, "demo")
	}
	in.Flush()
	snap := in.Snapshot(model.SnapshotOptions{})
	for b.Loop() {
		Choose(snap, Options{Pins: map[string]Pin{"host": PinDrop}})
	}
}
