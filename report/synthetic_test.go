package report

import (
	"bytes"
	"encoding/json"
	"strings"
	"testing"

	"bitsift/model"
	"bitsift/parse"
)

// A field declared synthetic is marked so in every output.
func TestSyntheticMarked(t *testing.T) {
	m := model.New(model.Options{})
	m.DeclareSynthetic("latency_ms~log", model.Synthetic{Source: "latency_ms", Method: "log10 buckets, 4 per decade"})
	var rec parse.Record
	for i, v := range []string{"12", "250", "31"} {
		rec.Reset()
		rec.AddString("latency_ms", v)
		rec.AddString("latency_ms~log", []string{"[10,18)", "[180,320)", "[18,32)"}[i])
		m.Add(&rec, int64(i+1), int64(i))
	}
	r := Build(m.Snapshot(model.SnapshotOptions{}))
	var js bytes.Buffer
	if err := WriteJSON(&js, r); err != nil {
		t.Fatal(err)
	}
	var out struct {
		Fields []struct {
			Name        string `json:"name"`
			Synthetic   bool   `json:"synthetic"`
			DerivedFrom string `json:"derived_from"`
		} `json:"fields"`
	}
	if err := json.Unmarshal(js.Bytes(), &out); err != nil {
		t.Fatal(err)
	}
	for _, f := range out.Fields {
		want := f.Name == "latency_ms~log"
		if f.Synthetic != want || (want && f.DerivedFrom != "latency_ms") {
			t.Errorf("%s: synthetic %v, derived_from %q", f.Name, f.Synthetic, f.DerivedFrom)
		}
	}
	for format, mark := range map[string]string{"text": "derived_by_bitsift", "markdown": "†", "csv": "true"} {
		var b bytes.Buffer
		if err := Write(&b, r, format); err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(b.String(), mark) {
			t.Errorf("%s output lacks %q:\n%s", format, mark, b.String())
		}
	}
}
