package profile

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"bitsift/model"
)

func small() *Profile {
	return &Profile{Format: "json", Confidence: 1, Measured: "log", Lines: 3, Coverage: []Coverage{{Kind: "file", Source: "/a", To: 10}},
		Counts: &model.CountTables{Records: 3, Fields: []model.FieldCounts{
			{Name: "a", Values: []string{"x", "y"}, Counts: []int64{2, 1}, Tracked: true},
			{Name: "b", Values: []string{"p"}, Counts: []int64{2}, Absent: 1, Tracked: true},
		}, Pairs: []model.PairCounts{{A: "a", B: "b", I: []uint32{1, 2}, J: []uint32{1, 0}, N: []int64{2, 1}}}}}
}

// TestFileIsZstdJSON: a profile file is a zstd frame the zstd tool reads,
// holding JSON that starts with its schema.
func TestFileIsZstdJSON(t *testing.T) {
	zstd, err := exec.LookPath("zstd")
	if err != nil {
		t.Skip("zstd is not installed (apt-get install zstd)")
	}
	path := filepath.Join(t.TempDir(), "p.bsp")
	if err := WriteFile(path, small()); err != nil {
		t.Fatal(err)
	}
	out, err := exec.Command(zstd, "-dc", path).Output()
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.HasPrefix(out, []byte(`{"schema":"bitsift.profile/1"`)) {
		t.Errorf("decompressed: %.80s", out)
	}
	var m map[string]any
	if err := json.Unmarshal(out, &m); err != nil {
		t.Error(err)
	}
	if !IsProfile(path) {
		t.Error("IsProfile is false for a profile")
	}
	p, err := ReadFile(path)
	if err != nil || p.Counts.Records != 3 {
		t.Fatalf("read back: %v %+v", err, p)
	}
}

// TestReadRejectsDamage: tables whose parts disagree are not read.
func TestReadRejectsDamage(t *testing.T) {
	for _, damage := range []func(*Profile){
		func(p *Profile) { p.Counts.Fields[0].Counts = p.Counts.Fields[0].Counts[:1] },
		func(p *Profile) { p.Counts.Pairs[0].I[0] = 9 },
		func(p *Profile) { p.Counts.Pairs[0].B = "nope" },
	} {
		p := small()
		damage(p)
		var buf bytes.Buffer
		Write(&buf, p)
		if _, err := Read(&buf); err == nil {
			t.Errorf("a damaged profile was read")
		}
	}
	notZstd := filepath.Join(t.TempDir(), "log")
	os.WriteFile(notZstd, []byte(`{"schema":"bitsift.profile/1"}`), 0o644)
	if IsProfile(notZstd) {
		t.Error("plain JSON taken for a profile")
	}
}

// TestAddBuckets: tables of different widths add at the coarser width.
func TestAddBuckets(t *testing.T) {
	s := int64(1e9)
	a := &Buckets{Width: s, Start: []int64{0, 1 * s, 59 * s, 60 * s}, Records: []int64{1, 2, 3, 4}}
	b := &Buckets{Width: 60 * s, Start: []int64{60 * s}, Records: []int64{10}}
	got := AddBuckets(a, nil, b)
	if got.Width != 60*s || fmt.Sprint(got.Start, got.Records) != fmt.Sprint([]int64{0, 60 * s}, []int64{6, 14}) {
		t.Errorf("got %+v", got)
	}
	if w := NewBuckets([]int64{0, 5 * s, 7200 * s}).Width; w != 10*s {
		t.Errorf("two hours in at most 4096 buckets: width %v s, want 10", w/s)
	}
}

// TestMergeSummariesKMV: summaries of overlapping value sets merge to the
// exact distinct count while complete, and past K to the KMV estimate,
// within 4/√K of the truth (Beyer et al. 2007: the relative standard error
// is about 1/√(K−2)).
func TestMergeSummariesKMV(t *testing.T) {
	mk := func(lo, hi, k int) *model.CountTables {
		f := model.FieldCounts{Name: "id", Values: []string{}, Counts: []int64{}}
		for i := lo; i < hi; i++ {
			f.Values = append(f.Values, fmt.Sprintf("id-%d", i))
			f.Counts = append(f.Counts, 1)
		}
		f.Summary = toSummary(&f)
		f.Summary.K = k
		if len(f.Summary.Hashes) > k {
			f.Summary.Hashes, f.Summary.Counts, f.Summary.Complete = f.Summary.Hashes[:k], f.Summary.Counts[:k], false
		}
		f.Values, f.Counts = nil, nil
		return &model.CountTables{Records: int64(hi - lo), Fields: []model.FieldCounts{f}}
	}
	// 0..30000 and 20000..50000: 50,000 distinct, 10,000 in both.
	exact := MergeCounts([]*model.CountTables{mk(0, 30000, 1<<17), mk(20000, 50000, 1<<17)}).Fields[0].Summary
	if !exact.Complete || exact.Distinct != 50000 || exact.Present != 60000 {
		t.Errorf("complete merge: %+v", exact.Distinct)
	}
	if want := 10000 * 2 * math.Log2(2); math.Abs(exact.CLogC-want) > 1e-6 {
		t.Errorf("Σ c·log2 c = %v, want %v (10,000 values seen twice)", exact.CLogC, want)
	}
	k := 1024
	est := MergeCounts([]*model.CountTables{mk(0, 30000, k), mk(20000, 50000, k)}).Fields[0].Summary
	if est.Complete || !est.Estimate || math.Abs(float64(est.Distinct)-50000)/50000 > 4/math.Sqrt(float64(k)) {
		t.Errorf("KMV estimate %d of 50,000 (complete %v)", est.Distinct, est.Complete)
	}
}

// TestMergeMissingField: a field one profile lacks is absent from all its
// records, in the field's table and in its pairs.
func TestMergeMissingField(t *testing.T) {
	a := small()
	b := small()
	b.Coverage = []Coverage{{Kind: "file", Source: "/b", To: 10}}
	b.Counts.Fields = b.Counts.Fields[:1]
	b.Counts.Pairs = nil
	m, err := Merge([]*Profile{a, b})
	if err != nil {
		t.Fatal(err)
	}
	fb := m.Counts.Fields[1]
	if fb.Name != "b" || fb.Absent != 4 || len(m.Counts.Pairs) != 1 {
		t.Fatalf("field b %+v, %d pairs", fb, len(m.Counts.Pairs))
	}
	var n int64
	for _, c := range m.Counts.Pairs[0].N {
		n += c
	}
	if n != 6 {
		t.Errorf("the pair counts %d records, want 6", n)
	}
	if _, err := Merge([]*Profile{a, small()}); err == nil || !strings.Contains(err.Error(), "twice") {
		t.Errorf("the same coverage twice: %v", err)
	}
}
