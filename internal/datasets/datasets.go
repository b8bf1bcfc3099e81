// Package datasets finds the shared open log samples for tests. They live
// in ../shared/datasets beside the checkout (never in the repository); a
// test that needs one skips, saying why, where they are absent.
// BITSIFT_DATASETS overrides the folder.
package datasets

import (
	"encoding/json"
	"os"
	"path/filepath"
	"testing"
)

// Dir returns the datasets folder, or skips the test.
func Dir(t testing.TB) string {
	t.Helper()
	if d := os.Getenv("BITSIFT_DATASETS"); d != "" {
		return d
	}
	wd, err := os.Getwd()
	if err != nil {
		t.Skipf("datasets: %v", err)
	}
	for d := wd; ; d = filepath.Dir(d) {
		if _, err := os.Stat(filepath.Join(d, "go.mod")); err == nil {
			ds := filepath.Join(d, "..", "shared", "datasets")
			if _, err := os.Stat(filepath.Join(ds, "EXPECTED.json")); err != nil {
				t.Skipf("shared datasets not found at %s (they sit beside the checkout in CI): %v", ds, err)
			}
			return ds
		}
		if filepath.Dir(d) == d {
			t.Skip("datasets: no go.mod above the test's folder")
		}
	}
}

// Path returns the path of one dataset file, or skips the test.
func Path(t testing.TB, name string) string {
	t.Helper()
	p := filepath.Join(Dir(t), name)
	if _, err := os.Stat(p); err != nil {
		t.Skipf("dataset %s missing: %v", name, err)
	}
	return p
}

// Expected is EXPECTED.json: reference values computed with pandas by the
// folder's expected.py.
type Expected struct {
	Datasets map[string]struct {
		Records       int `json:"records"`
		UnparsedLines int `json:"unparsed_lines"`
		Fields        []struct {
			Name     string  `json:"name"`
			Distinct int     `json:"distinct"`
			Entropy  float64 `json:"entropy_bits"`
		} `json:"fields"`
		Pairs []struct {
			Target      string  `json:"target"`
			Given       string  `json:"given"`
			Conditional float64 `json:"conditional_bits"`
		} `json:"pairs"`
	} `json:"datasets"`
}

// LoadExpected reads EXPECTED.json, or skips the test.
func LoadExpected(t testing.TB) *Expected {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(Dir(t), "EXPECTED.json"))
	if err != nil {
		t.Skipf("EXPECTED.json unreadable: %v", err)
	}
	var e Expected
	if err := json.Unmarshal(b, &e); err != nil {
		t.Fatalf("EXPECTED.json: %v", err)
	}
	return &e
}
