package ingest

import (
	"context"
	"math"
	"testing"

	"bitsift/internal/datasets"
	"bitsift/model"
)

// readDataset runs a shared dataset through an Ingester with automatic
// detection and returns the final snapshot.
func readDataset(t *testing.T, name string) *model.Snapshot {
	t.Helper()
	path := datasets.Path(t, name)
	in, err := New(Config{})
	if err != nil {
		t.Fatal(err)
	}
	if err := in.ReadFiles(context.Background(), []string{path}); err != nil {
		t.Fatal(err)
	}
	return in.Snapshot(model.SnapshotOptions{TopValues: 50})
}

// apache_logs.gz (elastic/examples, Apache-2.0): EXPECTED.json gives 9,999
// records, 1 unparsed line, and pandas' entropies of method, protocol,
// status, ident and user.
func TestApacheDataset(t *testing.T) {
	exp := datasets.LoadExpected(t)
	want := exp.Datasets["apache_logs.gz"]
	s := readDataset(t, "apache_logs.gz")
	if s.Input.Format != "access" {
		t.Fatalf("detected %q (%.2f), want access", s.Input.Format, s.Input.Confidence)
	}
	if s.Records != want.Records || s.Input.Rejected != int64(want.UnparsedLines) {
		t.Fatalf("%d records, %d rejected; EXPECTED.json: %d and %d", s.Records, s.Input.Rejected, want.Records, want.UnparsedLines)
	}
	for _, f := range want.Fields {
		t.Run(f.Name, func(t *testing.T) {
			i := s.Index(f.Name)
			if i < 0 {
				t.Fatalf("no field %s", f.Name)
			}
			got := s.Fields[i]
			if got.Distinct != f.Distinct || math.Abs(got.Entropy-f.Entropy) > 1e-6 {
				t.Errorf("distinct %d, H %.9f bits; EXPECTED.json: %d, %.9f", got.Distinct, got.Entropy, f.Distinct, f.Entropy)
			}
		})
	}
}

// auth.log.gz (elastic/examples, Apache-2.0): BSD syslog without <PRI> from
// one host; the README lists sshd, sudo and systemd lines.
func TestAuthLogDataset(t *testing.T) {
	s := readDataset(t, "auth.log.gz")
	if s.Input.Format != "rfc3164" {
		t.Fatalf("detected %q (%.2f), want rfc3164", s.Input.Format, s.Input.Confidence)
	}
	// The README: 7,121 lines.
	if s.Input.Lines != 7121 {
		t.Errorf("%d lines, want 7121", s.Input.Lines)
	}
	if share := float64(s.Records) / float64(s.Input.Lines); share < 0.999 {
		t.Errorf("%d of %d lines parse (%.4f), want ≥ 0.999: %v", s.Records, s.Input.Lines, share, s.Input.RejectedExamples)
	}
	host := s.Fields[s.Index("host")]
	if host.Kind != model.Constant || host.Present != s.Records {
		t.Errorf("host: kind %s, present %d of %d; want constant in every record", host.Kind, host.Present, s.Records)
	}
	apps := map[string]bool{}
	for _, v := range s.Fields[s.Index("app")].Top {
		apps[v.Value] = true
	}
	for _, a := range []string{"sshd", "sudo", "systemd-logind", "CRON", "systemd", "useradd", "su"} {
		if !apps[a] {
			t.Errorf("app lacks %q: %v", a, apps)
		}
	}
}

// Templates on the shared datasets: a small set, stable along the stream
// (the count over the first half against the whole), and readable. The
// counts are measured and recorded in the test's log; the bounds are
// generous, to catch a masking rule that stops working.
func TestTemplatesOnDatasets(t *testing.T) {
	for _, c := range []struct {
		file, field string
		max         int
	}{
		{"auth.log.gz", "msg~template", 150},
		{"apache_logs.gz", "agent~template", 400},
	} {
		t.Run(c.file, func(t *testing.T) {
			s := readDataset(t, c.file)
			i := s.Index(c.field)
			if i < 0 {
				t.Fatalf("no %s", c.field)
			}
			f := s.Fields[i]
			if f.Synthetic == nil {
				t.Errorf("%s is not marked synthetic", c.field)
			}
			if f.Distinct > c.max {
				t.Errorf("%d templates, want at most %d", f.Distinct, c.max)
			}
			src := s.Fields[s.Index(f.Synthetic.Source)]
			t.Logf("%d templates for %d distinct %s values in %d records; H = %.3f bits (raw %.3f)",
				f.Distinct, src.Distinct, src.Name, s.Records, f.Entropy, src.Entropy)
			for _, v := range f.Top[:min(12, len(f.Top))] {
				t.Logf("%6d  %s", v.Count, v.Value)
			}
		})
	}
}
