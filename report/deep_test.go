package report

import (
	"strings"
	"testing"
)

// TestDeepRecordsLine: the text report says when the determinants and
// surprising records cover only the newest records, and only then.
func TestDeepRecordsLine(t *testing.T) {
	tests := []struct {
		name          string
		records, deep int
		want          bool
	}{
		{"newest only", 1_000_000, 200_000, true},
		{"whole window", 50_000, 50_000, false},
		{"no deep analyses", 50_000, 0, false},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var b strings.Builder
			writeChanges(&b, &Report{Records: tt.records, DeepRecords: tt.deep})
			got := strings.Contains(b.String(), "over the newest 200000 of 1000000 records")
			if got != tt.want {
				t.Errorf("text %q: line shown %v, want %v", b.String(), got, tt.want)
			}
		})
	}
}
