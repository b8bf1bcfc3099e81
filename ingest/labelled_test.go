package ingest

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"bitsift/internal/datasets"
	"bitsift/testdata/labelled"
)

var updateLabelled = flag.Bool("update-labelled", false, "rewrite ../testdata/labelled/*.log and *.events from the generator")

// The labelled logs in testdata/labelled are the generator's output.
func TestLabelledFilesCurrent(t *testing.T) {
	for _, shape := range labelled.Shapes {
		lines, events := labelled.Generate(shape, 2000, 1)
		var lb, eb bytes.Buffer
		for i := range lines {
			lb.WriteString(lines[i] + "\n")
			fmt.Fprintln(&eb, events[i])
		}
		for _, f := range []struct {
			name string
			data []byte
		}{{shape + ".log", lb.Bytes()}, {shape + ".events", eb.Bytes()}} {
			path := filepath.Join("..", "testdata", "labelled", f.name)
			if *updateLabelled {
				if err := os.WriteFile(path, f.data, 0o644); err != nil {
					t.Fatal(err)
				}
				continue
			}
			got, err := os.ReadFile(path)
			if err != nil || !bytes.Equal(got, f.data) {
				t.Errorf("%s is not the generator's output (go test ./ingest/ -run LabelledFilesCurrent -update-labelled): %v", path, err)
			}
		}
	}
}

// annotateFile runs Annotate on path and returns its objects.
func annotateFile(t *testing.T, path string) ([]Annotation, float64, bool) {
	t.Helper()
	var out bytes.Buffer
	snap, err := Annotate(context.Background(), Config{}, []string{path}, &out)
	if err != nil {
		t.Fatal(err)
	}
	var ans []Annotation
	sc := bufio.NewScanner(&out)
	sc.Buffer(nil, 1<<20)
	for sc.Scan() {
		var a Annotation
		if err := json.Unmarshal(sc.Bytes(), &a); err != nil {
			t.Fatalf("%s: %v", sc.Text(), err)
		}
		ans = append(ans, a)
	}
	i := snap.Index("msg~template")
	if i < 0 {
		return ans, 0, false
	}
	return ans, snap.Fields[i].Entropy, true
}

// templateEntropy is H of the template ids over the records, absent as a
// value of its own (as the model counts it).
func templateEntropy(ans []Annotation, field string) float64 {
	counts := map[string]float64{}
	n := 0.0
	for _, a := range ans {
		if a.Fields == nil {
			continue
		}
		n++
		v, ok := a.Fields[field]
		if !ok {
			v = "\x00absent"
		}
		counts[v]++
	}
	h := 0.0
	for _, c := range counts {
		h -= c / n * math.Log2(c/n)
	}
	return h
}

// groupingAccuracy is GA as Zhu et al. define it (ICSE-SEIP 2019): a line
// is parsed right when the set of lines sharing its template is exactly the
// set sharing its true event.
func groupingAccuracy(got []string, truth []int) float64 {
	byT := map[string]map[int]int{}
	byE := map[int]map[string]int{}
	for i := range got {
		if byT[got[i]] == nil {
			byT[got[i]] = map[int]int{}
		}
		byT[got[i]][truth[i]]++
		if byE[truth[i]] == nil {
			byE[truth[i]] = map[string]int{}
		}
		byE[truth[i]][got[i]]++
	}
	right := 0
	for i := range got {
		if len(byT[got[i]]) == 1 && len(byE[truth[i]]) == 1 {
			right++
		}
	}
	return float64(right) / float64(len(got))
}

// Every shape is read with no flag (at least 99% of lines as records),
// its messages are grouped with GA ≥ 0.9 by the one fixed setting, and
// H(msg~template) from annotate's per-line ids equals the report's figure.
func TestLabelledShapes(t *testing.T) {
	var table strings.Builder
	fmt.Fprintf(&table, "%-13s %6s %8s %7s %9s %6s\n", "shape", "events", "records", "groups", "GA", "H(tpl)")
	for _, shape := range labelled.Shapes {
		path := filepath.Join("..", "testdata", "labelled", shape+".log")
		_, truth := labelled.Generate(shape, 2000, 1)
		ans, h, ok := annotateFile(t, path)
		if len(ans) != len(truth) {
			t.Fatalf("%s: %d annotations for %d lines", shape, len(ans), len(truth))
		}
		var got []string
		var gotTruth []int
		records := 0
		events := map[int]bool{}
		groups := map[string]bool{}
		for i, a := range ans {
			events[truth[i]] = true
			if a.Fields == nil {
				continue
			}
			records++
			tpl, has := a.Templates["msg"]
			key := fmt.Sprint(tpl.ID)
			if !has {
				key = "none"
			} else if tpl.ID == 0 {
				key = tpl.Text
			}
			groups[key] = true
			got = append(got, key)
			gotTruth = append(gotTruth, truth[i])
		}
		share := float64(records) / float64(len(ans))
		ga := groupingAccuracy(got, gotTruth) * share // a rejected line is a line parsed wrong
		fmt.Fprintf(&table, "%-13s %6d %7.1f%% %7d %9.4f %6.3f\n", shape, len(events), 100*share, len(groups), ga, h)
		if share < 0.99 {
			t.Errorf("%s: %.1f%% of lines read as records, want ≥ 99%%", shape, 100*share)
		}
		if !ok {
			t.Errorf("%s: no msg~template", shape)
			continue
		}
		if ga < 0.9 {
			t.Errorf("%s: grouping accuracy %.4f, want ≥ 0.9", shape, ga)
		}
		if ha := templateEntropy(ans, "msg~template"); math.Abs(ha-h) > 1e-9 {
			t.Errorf("%s: H(msg~template) from annotate %.9f, report %.9f", shape, ha, h)
		}
	}
	t.Logf("grouping accuracy (Zhu et al. 2019), 2,000 lines per shape:\n%s", table.String())
}

// On the shared auth.log and apache_logs, annotate's per-line template ids
// give the report's template entropy exactly.
func TestAnnotateDatasetEntropy(t *testing.T) {
	for _, c := range []struct{ file, field string }{{"auth.log.gz", "msg~template"}, {"apache_logs.gz", "agent~template"}} {
		path := datasets.Path(t, c.file)
		var out bytes.Buffer
		snap, err := Annotate(context.Background(), Config{}, []string{path}, &out)
		if err != nil {
			t.Fatal(err)
		}
		var ans []Annotation
		for _, l := range bytes.Split(bytes.TrimSpace(out.Bytes()), []byte("\n")) {
			var a Annotation
			if err := json.Unmarshal(l, &a); err != nil {
				t.Fatal(err)
			}
			ans = append(ans, a)
		}
		i := snap.Index(c.field)
		if i < 0 {
			t.Fatalf("%s: no %s", c.file, c.field)
		}
		if int64(len(ans)) != snap.Input.Lines {
			t.Errorf("%s: %d annotations for %d lines", c.file, len(ans), snap.Input.Lines)
		}
		if ha, h := templateEntropy(ans, c.field), snap.Fields[i].Entropy; math.Abs(ha-h) > 1e-9 {
			t.Errorf("%s: H(%s) from annotate %.9f, report %.9f", c.file, c.field, ha, h)
		}
	}
}
