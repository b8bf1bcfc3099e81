package cli

import (
	"encoding/json"
	"fmt"
	"slices"
	"strings"
	"testing"
)

// TestDuplicateKeysKeepLastCountedAndPlanned: lines that give "berth"
// twice, a constant first and a varying last. Downstream readers (jq, Go,
// Python) see the last, so bitsift must too: the report counts the
// records with duplicate keys, berth has the distinct values
// encoding/json reads, and the plan does not drop berth as a constant
// (which would delete what downstream sees).
func TestDuplicateKeysKeepLastCountedAndPlanned(t *testing.T) {
	var b strings.Builder
	distinct := map[string]bool{}
	for i := 0; i < 2000; i++ {
		line := fmt.Sprintf(`{"berth":"0","ship":"s%d","tide":"%d","berth":"%d"}`, i%50, i%3, (i*7)%13)
		if i%4 == 0 {
			line = fmt.Sprintf(`{"berth":"%d","ship":"s%d","tide":"%d"}`, (i*7)%13, i%50, i%3)
		}
		var m map[string]string
		if err := json.Unmarshal([]byte(line), &m); err != nil {
			t.Fatal(err)
		}
		distinct[m["berth"]] = true
		b.WriteString(line + "\n")
	}
	p := write(t, "berths-dup.jsonl", []byte(b.String()))
	code, out, errs := run(t, "", "report", "-o", "json", p)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var r struct {
		Dup    int64 `json:"duplicate_key_records"`
		Fields []struct {
			Name     string
			Distinct int
		}
	}
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	if r.Dup != 1500 {
		t.Errorf("duplicate_key_records %d, want 1500", r.Dup)
	}
	for _, f := range r.Fields {
		if f.Name == "berth" && f.Distinct != len(distinct) {
			t.Errorf("berth: %d distinct, encoding/json reads %d", f.Distinct, len(distinct))
		}
	}
	_, text, _ := run(t, "", "report", p)
	if !strings.Contains(text, "1500 records gave a key twice") {
		t.Errorf("the text report does not count the duplicates:\n%s", text)
	}
	pl := runPlan(t, p)
	if slices.Contains(pl.Drop, "berth") {
		t.Errorf("the plan drops berth as a constant: %v", pl.Drop)
	}
}
