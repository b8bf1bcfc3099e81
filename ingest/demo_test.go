package ingest

import (
	"testing"

	"bitsift/demo"
	"bitsift/model"
)

func demoSnapshot(t testing.TB, lines int64) *model.Snapshot {
	t.Helper()
	in, err := New(Config{})
	if err != nil {
		t.Fatal(err)
	}
	g := demo.New(1, lines)
	buf := make([]byte, 0, 512)
	for i := int64(1); i <= lines; i++ {
		buf = g.Append(buf[:0])
		in.Line(buf, i, "demo")
	}
	in.Flush()
	return in.Snapshot(model.SnapshotOptions{})
}

// TestDemoKinds: the demo stream's documented relations (package demo) come
// out as kinds: its identifier is an identifier, its derived fields are
// derived from what determines them, and nothing is derived from the
// identifier.
func TestDemoKinds(t *testing.T) {
	s := demoSnapshot(t, 200_000)
	if s.Input.Format != "json" || s.Input.Rejected != 0 || s.Records != 200_000 {
		t.Fatalf("format %s, %d rejected, %d records", s.Input.Format, s.Input.Rejected, s.Records)
	}
	want := map[string]struct {
		kind  model.Kind
		given string
	}{
		"svc":    {model.Constant, ""},
		"req_id": {model.Identifier, ""},
		"zone":   {model.Derived, "host"},
		"region": {model.Derived, "zone"},
		"method": {model.Derived, "route"},
		"level":  {model.Derived, "status"},
		// upstream follows from route except during the incident.
		"upstream":   {model.Informative, "route"},
		"latency_ms": {model.Informative, ""},
		"host":       {model.Informative, ""},
	}
	for name, w := range want {
		i := s.Index(name)
		if i < 0 {
			t.Errorf("no field %s", name)
			continue
		}
		f := s.Fields[i]
		if f.Kind != w.kind || (w.given != "" && f.BestGiven != w.given) {
			t.Errorf("%s: %s given %s (H %.4f left), want %s given %s", name, f.Kind, f.BestGiven, f.Residual, w.kind, w.given)
		}
	}
	for _, f := range s.Fields {
		if f.BestGiven == "req_id" || f.BestGiven == "ts" {
			t.Errorf("%s is predicted by identifier %s", f.Name, f.BestGiven)
		}
	}
}
