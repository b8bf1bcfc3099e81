package model

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat"

	"bitsift/parse"
)

// recs builds a model over records given as alternating key, value lists.
func build(t testing.TB, w Window, rows [][]string) *Model {
	t.Helper()
	m := New(Options{Window: w})
	var rec parse.Record
	for i, r := range rows {
		rec.Reset()
		for j := 0; j+1 < len(r); j += 2 {
			rec.AddString(r[j], r[j+1])
		}
		m.Add(&rec, int64(i+1), int64(i))
	}
	m.Flush()
	return m
}

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.Abs(got-want) > tol {
		t.Errorf("%s = %.12f, want %.12f (±%g)", what, got, want, tol)
	}
}

// TestEntropyAgainstGonum checks the plug-in entropy of random count vectors
// against gonum's stat.Entropy (natural log), converted to bits.
func TestEntropyAgainstGonum(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 7))
	for trial := 0; trial < 200; trial++ {
		k := 1 + r.IntN(40)
		counts := make([]int, k)
		total := 0
		for i := range counts {
			counts[i] = r.IntN(1000)
			if trial%3 == 0 {
				counts[i] = r.IntN(100000)
			}
			total += counts[i]
		}
		if total == 0 {
			continue
		}
		p := make([]float64, k)
		for i, c := range counts {
			p[i] = float64(c) / float64(total)
		}
		// Reference: gonum stat.Entropy, nats → bits.
		want := stat.Entropy(p) / math.Ln2
		near(t, fmt.Sprintf("trial %d: H%v", trial, counts), EntropyOfCounts(counts), want, 1e-9)
	}
}

// TestCoverThomasExample221 expands the joint table of Cover & Thomas,
// Elements of Information Theory, 2nd ed., Example 2.2.1 into 32 records
// and checks the figures the book derives: H(X)=7/4, H(Y)=2, H(X|Y)=11/8,
// H(Y|X)=13/8, H(X,Y)=27/8, I(X;Y)=3/8 bits.
func TestCoverThomasExample221(t *testing.T) {
	// p(x,y) in 32nds; rows y=1..4, columns x=1..4.
	table := [4][4]int{
		{4, 2, 1, 1},
		{2, 4, 1, 1},
		{2, 2, 2, 2},
		{8, 0, 0, 0},
	}
	var rows [][]string
	for y := range table {
		for x, n := range table[y] {
			for k := 0; k < n; k++ {
				rows = append(rows, []string{"x", fmt.Sprint(x + 1), "y", fmt.Sprint(y + 1)})
			}
		}
	}
	s := build(t, Window{}, rows).Snapshot(SnapshotOptions{})
	x, y := s.Index("x"), s.Index("y")
	near(t, "H(X)", s.Fields[x].Entropy, 7.0/4, 1e-9)
	near(t, "H(Y)", s.Fields[y].Entropy, 2, 1e-9)
	near(t, "H(X|Y)", s.Cond(x, y), 11.0/8, 1e-9)
	near(t, "H(Y|X)", s.Cond(y, x), 13.0/8, 1e-9)
	near(t, "H(X,Y)", s.Joint(x, y), 27.0/8, 1e-9)
	near(t, "I(X;Y)", s.Mutual(x, y), 3.0/8, 1e-9)
	// Chain rule: H(X,Y) = H(Y) + H(X|Y).
	near(t, "H(Y)+H(X|Y)", s.Fields[y].Entropy+s.Cond(x, y), s.Joint(x, y), 1e-12)
}

// TestMutualInfoScikitLearn: scikit-learn 1.2.1
// mutual_info_score([0,0,0,1,1,1],[0,0,1,1,2,2]) = 0.4620981204 nats.
func TestMutualInfoScikitLearn(t *testing.T) {
	a := []string{"0", "0", "0", "1", "1", "1"}
	b := []string{"0", "0", "1", "1", "2", "2"}
	var rows [][]string
	for i := range a {
		rows = append(rows, []string{"a", a[i], "b", b[i]})
	}
	s := build(t, Window{}, rows).Snapshot(SnapshotOptions{})
	near(t, "I(a;b) nats", s.Mutual(s.Index("a"), s.Index("b"))*math.Ln2, 0.4620981204, 1e-9)
}

// TestMillerMadow: the example counts of the R package entropy (Hausser &
// Strimmer), (4,2,3,2,4,2,1,1), give plug-in 1.9683824087 nats and
// Miller–Madow 2.1525929350 nats.
func TestMillerMadow(t *testing.T) {
	counts := []int{4, 2, 3, 2, 4, 2, 1, 1}
	var rows [][]string
	for v, c := range counts {
		for k := 0; k < c; k++ {
			rows = append(rows, []string{"f", fmt.Sprint("v", v)})
		}
	}
	s := build(t, Window{}, rows).Snapshot(SnapshotOptions{})
	f := s.Fields[s.Index("f")]
	near(t, "plug-in nats", f.Entropy*math.Ln2, 1.9683824087, 1e-9)
	near(t, "Miller–Madow nats", f.EntropyMM*math.Ln2, 2.1525929350, 1e-9)
}

// TestUniform: log2 26 = 4.7004 bits, log2 5 = 2.3219 bits (common practice).
func TestUniform(t *testing.T) {
	for _, k := range []struct {
		n    int
		want float64
	}{{26, 4.7004}, {5, 2.3219}} {
		counts := make([]int, k.n)
		for i := range counts {
			counts[i] = 3
		}
		near(t, fmt.Sprintf("H(uniform %d)", k.n), EntropyOfCounts(counts), k.want, 5e-5)
	}
}

// TestAbsentIsAValue: a record that lacks a field counts as the value
// "absent"; half present, half absent is one bit.
func TestAbsentIsAValue(t *testing.T) {
	s := build(t, Window{}, [][]string{{"a", "1", "b", "x"}, {"a", "1"}, {"a", "1", "b", "x"}, {"a", "1"}}).
		Snapshot(SnapshotOptions{})
	b := s.Fields[s.Index("b")]
	near(t, "H(b)", b.Entropy, 1, 1e-12)
	if b.Distinct != 2 || b.Present != 2 {
		t.Errorf("b: distinct %d present %d, want 2 and 2", b.Distinct, b.Present)
	}
	if a := s.Fields[s.Index("a")]; a.Kind != Constant {
		t.Errorf("a is %s, want constant", a.Kind)
	}
}
