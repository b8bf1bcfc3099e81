package report

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"

	"bitsift/model"
)

// ReadBaseline reads the profile of a saved JSON report (report -o json),
// for use as a baseline.
func ReadBaseline(path string) (*model.Profile, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("baseline: %w", err)
	}
	var r struct {
		Schema  string         `json:"schema"`
		Profile *model.Profile `json:"profile"`
	}
	if err := json.Unmarshal(data, &r); err != nil {
		return nil, fmt.Errorf("baseline %s: not a JSON report (%v); make one with: bitsift report -o json FILE > %s", path, err, filepath.Base(path))
	}
	if r.Schema != Schema {
		return nil, fmt.Errorf("baseline %s: schema %q, want %q; make one with: bitsift report -o json FILE", path, r.Schema, Schema)
	}
	if r.Profile == nil || r.Profile.Records == 0 {
		return nil, fmt.Errorf("baseline %s: the report has no profile (written by an older bitsift, or over no records); write it again with report -o json", path)
	}
	r.Profile.Source = filepath.Base(path)
	return r.Profile, nil
}
