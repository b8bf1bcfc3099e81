package plan

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"bitsift/ingest"
	"bitsift/model"
)

// lines turns n records made by gen into JSON lines.
func lines(n int, gen func(i int) string) [][]byte {
	out := make([][]byte, n)
	for i := range out {
		out[i] = []byte(gen(i))
	}
	return out
}

// snapshotOf reads the lines into a model and a sample.
func snapshotOf(t testing.TB, ls [][]byte) (*model.Snapshot, *Sample) {
	t.Helper()
	in, err := ingest.New(ingest.Config{Model: model.Options{Window: model.Window{Kind: model.WindowAll}}})
	if err != nil {
		t.Fatal(err)
	}
	smp := NewSample(0)
	for i, l := range ls {
		in.Line(l, int64(i+1), "test")
		smp.Add(l)
	}
	in.Flush()
	return in.Snapshot(model.SnapshotOptions{}), smp
}

// TestMutualDetermination: of two fields that determine each other, one
// is kept (the smaller), the other derived from it.
func TestMutualDetermination(t *testing.T) {
	codes := []string{"A", "B", "C", "D"}
	names := []string{"alpha-station", "bravo-station", "charlie-station", "delta-station"}
	r := rand.New(rand.NewPCG(1, 2))
	s, smp := snapshotOf(t, lines(2000, func(int) string {
		k := r.IntN(4)
		return fmt.Sprintf(`{"code":%q,"name":%q,"n":%d}`, codes[k], names[k], r.IntN(50))
	}))
	p, err := Make(s, smp, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if a, b := p.Field("code").Action, p.Field("name").Action; a != Keep || b != Derive {
		t.Errorf("code %s, name %s; want code kept and name derived from it", a, b)
	}
	if p.Measured.Mismatches != 0 || !p.Lossless {
		t.Errorf("mismatches %d lossless %v", p.Measured.Mismatches, p.Lossless)
	}
}

// TestPins: a pinned keep stays; a pinned drop goes even when it loses
// bits, without a table (nothing rebuilds it), and fields it determined
// find another determinant or stay.
func TestPins(t *testing.T) {
	p := demoPlan(t, 10_000, Options{Pins: map[string]Pin{"zone": PinKeep, "host": PinDrop}})
	want := map[string]Action{"zone": Keep, "host": Drop, "region": Derive, "svc": Drop}
	for name, a := range want {
		if f := p.Field(name); f.Action != a {
			t.Errorf("%s: %s (%s), want %s", name, f.Action, f.Reason, a)
		}
	}
	if f := p.Field("region"); !slices.Equal(f.From, []string{"zone"}) || !f.Exact {
		t.Errorf("region from %v exact %v, want from zone, exact", f.From, f.Exact)
	}
	// H(host) = log2 12 = 3.585 bits: twelve equally likely hosts
	// (package demo); with no table, all of it is lost.
	if f := p.Field("host"); math.Abs(f.BitsLost-math.Log2(12)) > 0.05 || p.Lossless {
		t.Errorf("host loses %.3f bits (want about 3.585), lossless %v", f.BitsLost, p.Lossless)
	}
	if len(p.Notes) == 0 {
		t.Error("no note that the pinned drop exceeds --max-loss 0")
	}
}

// TestMaxLoss: a budget lets low-information fields go, never past it.
func TestMaxLoss(t *testing.T) {
	for _, budget := range []float64{0, 0.2, 1, 5} {
		t.Run(fmt.Sprint(budget), func(t *testing.T) {
			p := demoPlan(t, 10_000, Options{MaxLoss: budget})
			if p.BitsLost > budget+1e-9 {
				t.Errorf("bits lost %.4f > budget %g", p.BitsLost, budget)
			}
			sum := 0.0
			for _, f := range p.Fields {
				sum += f.BitsLost
			}
			if math.Abs(sum-p.BitsLost) > 1e-9 {
				t.Errorf("plan loses %v, fields sum to %v", p.BitsLost, sum)
			}
			if budget >= 1 && p.Field("refund_reason").Action == Keep {
				t.Errorf("refund_reason (0.1 bits) kept with a budget of %g bits", budget)
			}
			if budget == 0 && !p.Lossless {
				t.Error("not lossless")
			}
		})
	}
}

// TestChainBound: the bound is the joint entropy for a Markov chain along
// the forest, and never below it. Sources: the chain rule for entropy,
// H(X,Y,Z) = H(X) + H(Y|X) + H(Z|X,Y) (Cover & Thomas, 2nd ed., Theorem
// 2.5.1), and H(Z|X,Y) ≤ H(Z|Y) (Theorem 2.6.5, conditioning reduces
// entropy).
func TestChainBound(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	t.Run("markov", func(t *testing.T) {
		// x uniform on 8, y = x mod 4, z = y mod 2: H(x,y,z) = H(x) = 3.
		s, _ := snapshotOf(t, lines(4096, func(i int) string {
			x := i % 8
			return fmt.Sprintf(`{"x":%d,"y":%d,"z":%d}`, x, x%4, x%2)
		}))
		if b := ChainBound(s, []int{0, 1, 2}); math.Abs(b-3) > 1e-6 {
			t.Errorf("bound %v, want 3", b)
		}
	})
	t.Run("never below the joint", func(t *testing.T) {
		ls := lines(3000, func(int) string {
			a := r.IntN(4)
			return fmt.Sprintf(`{"a":%d,"b":%d,"c":%d}`, a, (a+r.IntN(2))%4, r.IntN(3)*a)
		})
		s, _ := snapshotOf(t, ls)
		counts := map[string]int64{}
		for _, l := range ls {
			counts[string(l)]++
		}
		var cs []int64
		for _, c := range counts {
			cs = append(cs, c)
		}
		joint := Entropy(cs)
		sum := 0.0
		for _, f := range s.Fields {
			sum += f.Entropy
		}
		b := ChainBound(s, []int{0, 1, 2})
		if b < joint-1e-9 || b > sum+1e-9 {
			t.Errorf("bound %v outside [H(a,b,c) = %v, ΣH = %v]", b, joint, sum)
		}
	})
}

// TestPinnedDropIsDrop: a derived field pinned to drop is dropped, not
// derived (no table ships), and the plan says what that loses: the
// field's whole entropy. The demo's relation (package demo): route
// determines method.
func TestPinnedDropIsDrop(t *testing.T) {
	free := demoPlan(t, 5_000, Options{})
	if f := free.Field("method"); f.Action != Derive {
		t.Fatalf("unpinned method: %s, want derive", f.Action)
	}
	p := demoPlan(t, 5_000, Options{Pins: map[string]Pin{"method": PinDrop}})
	f := p.Field("method")
	if f.Action != Drop || f.Table != nil || f.BitsLost != f.Entropy || p.Lossless {
		t.Errorf("pinned method: %s, table %v, lost %v of H %v, lossless %v", f.Action, f.Table, f.BitsLost, f.Entropy, p.Lossless)
	}
}
