package model

import (
	"fmt"
	"math"
	"testing"
)

// TestAMIScikitLearn: scikit-learn 1.2.1
// adjusted_mutual_info_score([0,0,0,1,1,1],[0,0,1,1,2,2]) = 0.2987924582
// (average_method "arithmetic", the default) and 0.2250422832 ("max"); its
// expected_mutual_information for these labels is 0.2772588722 nats.
func TestAMIScikitLearn(t *testing.T) {
	table := [][]int{{2, 1, 0}, {0, 1, 2}}
	emi, approx := ExpectedMutualInfo([]int{3, 3}, []int{2, 2, 2})
	if approx {
		t.Error("E[I] of a 2×3 table was approximated")
	}
	near(t, "E[I] nats", emi*math.Ln2, 0.2772588722, 1e-9)
	near(t, "AMI arithmetic", AdjustedMutualInfo(table, "arithmetic"), 0.2987924582, 1e-9)
	near(t, "AMI max", AdjustedMutualInfo(table, "max"), 0.2250422832, 1e-9)
}

// TestRFIZipCity: zip (z1,z1,z1,z2,z2,z3,z3,z3) and city (A,A,B,C,C,D,D,D);
// the figures are computed by hand from the published formulas (Vinh et
// al. 2010 for E[I]; Mandros et al. 2017 for RFI): H(city) = 1.9056390622,
// H(city|zip) = 0.3443609378 bits, FI = 0.8192937243, RFI = 0.4132049407. A
// unique row id gives FI = 1 and RFI = 0.
func TestRFIZipCity(t *testing.T) {
	zip := []string{"z1", "z1", "z1", "z2", "z2", "z3", "z3", "z3"}
	city := []string{"A", "A", "B", "C", "C", "D", "D", "D"}
	var rows [][]string
	for i := range zip {
		rows = append(rows, []string{"zip", zip[i], "city", city[i], "row", fmt.Sprint(i)})
	}
	s := build(t, Window{}, rows).Snapshot(SnapshotOptions{})
	c, z, r := s.Index("city"), s.Index("zip"), s.Index("row")
	near(t, "H(city)", s.Fields[c].Entropy, 1.9056390622, 1e-9)
	near(t, "H(city|zip)", s.Cond(c, z), 0.3443609378, 1e-9)
	near(t, "FI(zip→city)", s.Mutual(c, z)/s.Fields[c].Entropy, 0.8192937243, 1e-9)
	near(t, "RFI(zip→city)", s.RFI(c, z), 0.4132049407, 1e-9)
	// Eight records are too few for the identifier rule: row is tracked.
	near(t, "FI(row→city)", s.Mutual(c, r)/s.Fields[c].Entropy, 1, 1e-9)
	near(t, "RFI(row→city)", s.RFI(c, r), 0, 1e-9)
	if k := s.Fields[c].Kind; k == Derived {
		t.Errorf("city is %s (given %s): eight records cannot show a dependency", k, s.Fields[c].BestGiven)
	}
}

// TestEMIFirstOrder: with many records per cell, E[I] approaches the
// first-order value (Ka−1)(Kb−1)/(2N ln 2) bits (the chi-square limit of
// 2N·ln2·I; common practice), and the exact sum stays within its work bound.
func TestEMIFirstOrder(t *testing.T) {
	a := []int{2500, 2500, 2500, 2500}
	b := []int{4000, 3000, 2000, 1000}
	got, approx := ExpectedMutualInfo(a, b)
	if approx {
		t.Fatal("approximated a 4×4 table")
	}
	want := 3.0 * 3 / (2 * 10000 * math.Ln2)
	near(t, "E[I] bits", got, want, want*0.01)
}

// TestRFIGuard: no field is derived from an identifier or from a field with
// a handful of records per value, on small samples, while a real relation
// with many records per value is.
func TestRFIGuard(t *testing.T) {
	cases := []struct {
		name     string
		records  int
		perValue int // records per value of the candidate G
		derived  bool
	}{
		{"2 per value", 64, 2, false},
		{"4 per value", 200, 4, false},
		{"5 per value", 500, 5, false},
		// Eight records per value all agreeing by chance has odds 2^-7 per
		// value, 2^-700 for all hundred: a real relation, and accepted.
		{"8 per value", 800, 8, true},
		{"50 per value", 2000, 50, true},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			// F is a coin; G has records/perValue values and, by
			// construction, each value of G sees one value of F: in the
			// sample G "determines" F exactly. With few records per value
			// that is what chance would give too.
			var rows [][]string
			for i := 0; i < c.records; i++ {
				g := i / c.perValue
				f := fmt.Sprint((g * 7919 / 3) % 2)
				rows = append(rows, []string{"g", fmt.Sprint("g", g), "f", f, "id", fmt.Sprint("r", i)})
			}
			s := build(t, Window{}, rows).Snapshot(SnapshotOptions{})
			f, g := s.Index("f"), s.Index("g")
			if s.Fields[g].Kind == Identifier {
				// Too many values per record even to be paired: fine.
				if s.Fields[f].Kind == Derived {
					t.Errorf("f derived from %s", s.Fields[f].BestGiven)
				}
				return
			}
			if s.Cond(f, g) != 0 {
				t.Fatalf("H(f|g) = %g, want 0 by construction", s.Cond(f, g))
			}
			fs := s.Fields[f]
			t.Logf("RFI(g→f) = %.4f", s.RFI(f, g))
			if got := fs.Kind == Derived; got != c.derived {
				t.Errorf("f is %s given %s (RFI %.3f), want derived %v", fs.Kind, fs.BestGiven, s.RFI(f, g), c.derived)
			}
			if fs.BestGiven == "id" {
				t.Errorf("f is predicted by the identifier id")
			}
		})
	}
}
