package parse

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Each format detects itself, with no flag, on its file in
// testdata/detect/ (lines of an invented greenhouse-controller fleet), and
// parses every line of it.
func TestDetectOwnFiles(t *testing.T) {
	files, err := filepath.Glob("testdata/detect/*.log")
	if err != nil || len(files) == 0 {
		t.Fatalf("no detection files: %v", err)
	}
	seen := map[string]bool{}
	for _, path := range files {
		name := strings.TrimSuffix(filepath.Base(path), ".log")
		seen[name] = true
		t.Run(name, func(t *testing.T) {
			b, err := os.ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			lines := bytes.Split(bytes.TrimRight(b, "\n"), []byte("\n"))
			d, err := Detect(lines)
			if err != nil {
				t.Fatal(err)
			}
			if d.Format.Name() != name || d.Confidence < 0.6 {
				t.Fatalf("detected %s (%.2f), want %s with confidence ≥ 0.6", d.Format.Name(), d.Confidence, name)
			}
			// The runner-up must trail well behind, so that detection is not
			// a coin toss on lines like these.
			for _, other := range Names() {
				if other == name {
					continue
				}
				f, _ := ByName(other)
				sum := 0.0
				for _, l := range lines {
					sum += f.Sniff(l)
				}
				margin := 0.25
				if name == "docker" && other == "json" {
					// Docker JSON-file lines are JSON: json reads them
					// right, only without the inner message; docker need
					// only win.
					margin = 0.01
				}
				if mean := sum / float64(len(lines)); mean > d.Confidence-margin {
					t.Errorf("%s scores %.2f against the winner's %.2f", other, mean, d.Confidence)
				}
			}
			for i, l := range lines {
				var rec Record
				if err := d.Format.Parse(l, &rec); err != nil && !errors.Is(err, ErrPart) {
					t.Errorf("line %d: %v", i+1, err)
				}
			}
		})
	}
	for _, n := range Names() {
		if !seen[n] {
			t.Errorf("format %s has no testdata/detect/%s.log", n, n)
		}
	}
}

// Detection is deterministic and the same for every order of formats: run
// it twice on a mixed sample.
func TestDetectDeterministic(t *testing.T) {
	sample := [][]byte{
		[]byte(`{"zone":"north"}`),
		[]byte(`zone=north rh=71`),
		[]byte(`<14>Mar  2 06:00:01 gh misting: on`),
	}
	a, _ := Detect(sample)
	b, _ := Detect(sample)
	if a.Format.Name() != b.Format.Name() || a.Confidence != b.Confidence {
		t.Errorf("two runs: %s %.3f and %s %.3f", a.Format.Name(), a.Confidence, b.Format.Name(), b.Confidence)
	}
}
