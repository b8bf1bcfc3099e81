package cli

import (
	"encoding/json"
	"strings"
	"testing"

	"bitsift/internal/hostile"
)

// TestHostileFileAccounted: 20,000 hostile lines; every one is a record or
// a rejection with a reason, the well-formed ones are all records, and no
// escape sequence reaches the text output.
func TestHostileFileAccounted(t *testing.T) {
	const maxLine = 4096
	data, good := hostile.Lines(20000, maxLine)
	p := write(t, "hostile.log", data)
	code, out, errs := run(t, "", "report", "-o", "json", "--format", "json", "--max-line", "4096", p)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var r struct {
		Records, Rejected, Lines int
		Examples                 []struct{ Reason string } `json:"rejected_examples"`
		LeftOut                  int                       `json:"left_out_fields"`
	}
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	if r.Lines != 20000 || r.Records+r.Rejected != r.Lines || r.Records != good {
		t.Errorf("lines %d = records %d + rejected %d? want 20000 lines, %d records", r.Lines, r.Records, r.Rejected, good)
	}
	for _, e := range r.Examples {
		if e.Reason == "" {
			t.Error("a rejection without a reason")
		}
	}
	if r.LeftOut == 0 {
		t.Error("the flood of field names left nothing out: the field cap did not hold")
	}
	_, text, _ := run(t, "", "report", "--format", "json", "--max-line", "4096", p)
	if strings.ContainsAny(text, "\x1b\x07") || strings.Contains(text, "\x00") {
		t.Error("the text report holds a raw control character")
	}
}

// TestEmptyAndUnterminated: an empty file is 0 lines (and no records, exit
// 5); a last line without
// a newline still counts.
func TestEmptyAndUnterminated(t *testing.T) {
	code, out, _ := run(t, "", "report", "-o", "json", write(t, "empty.log", nil))
	if code != ExitNoRecords || !strings.Contains(out, `"lines": 0`) {
		t.Errorf("empty file: exit %d\n%s", code, out)
	}
	code, out, _ = run(t, "", "report", "-o", "json", write(t, "tail.log", []byte("a=1 b=2\na=2 b=3")))
	if code != 0 || !strings.Contains(out, `"records": 2`) {
		t.Errorf("unterminated last line: exit %d\n%s", code, out)
	}
}
