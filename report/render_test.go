package report

import (
	"bytes"
	"strings"
	"testing"

	"bitsift/model"
	"bitsift/parse"
	"bitsift/sanitize"
)

func snapshotOf(rows [][]string) *model.Snapshot {
	m := model.New(model.Options{})
	var rec parse.Record
	for i, r := range rows {
		rec.Reset()
		for j := 0; j+1 < len(r); j += 2 {
			rec.AddString(r[j], r[j+1])
		}
		m.Add(&rec, int64(i+1), int64(i))
	}
	m.Flush()
	return m.Snapshot(model.SnapshotOptions{})
}

// TestTextFitsAndIsSafe: the text report stays within 80 columns and sends
// no control character, whatever the field names hold.
func TestTextFitsAndIsSafe(t *testing.T) {
	var rows [][]string
	for i := 0; i < 200; i++ {
		rows = append(rows, []string{
			"a_very_long_field_name_that_goes_on_and_on", string(rune('a' + i%3)),
			"\x1b]0;title\x07evil", "x",
			"日本語のフィールド名です", string(rune('a' + i%5)),
		})
	}
	var b bytes.Buffer
	if err := WriteText(&b, Build(snapshotOf(rows))); err != nil {
		t.Fatal(err)
	}
	for i, line := range strings.Split(b.String(), "\n") {
		if w := sanitize.Width(line); w > 80 {
			t.Errorf("line %d is %d columns: %q", i+1, w, line)
		}
		if strings.ContainsAny(line, "\x1b\x07\r") {
			t.Errorf("line %d holds a control character: %q", i+1, line)
		}
	}
}

func TestUnknownFormat(t *testing.T) {
	if err := Write(&bytes.Buffer{}, Build(snapshotOf(nil)), "yaml"); err == nil {
		t.Error("yaml accepted")
	}
}
