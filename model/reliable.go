package model

import "math"

// Reliable dependency. Plug-in mutual information is biased upwards: with
// few records per value of G, chance alone makes I(F;G) large, and a field
// of unique values "determines" every other field. The reliable fraction of
// information (Mandros, Boley and Vreeken, "Discovering Reliable Approximate
// Functional Dependencies", KDD 2017) subtracts the mutual information
// expected when the records are paired at random (see emi.go):
//
//	RFI(G→F) = (I(F;G) − E[I(F;G)]) / H(F)
//
// It is 0 for a G that tells no more than chance (a unique id: E[I] = I),
// and close to the plain fraction I/H(F) when G has many records per value.
//
// Derived rule: F is derived from G when H(F|G) ≤ DerivedMaxResidual bits,
// H(F|G) ≤ a tenth of H(F) (so that a nearly constant F is not "derived"
// from whatever), and RFI(G→F) ≥ DerivedMinRFI; G must be tracked, neither
// an identifier nor constant.
//
// The values were tuned on the demo stream and on small samples (tests in
// reliable_test.go). ε = 0.01 bits lets a rule survive one stray record in
// several thousand (a 1-in-5,000 exception costs about 0.003 bits) but not
// a real second mapping. RFI ≥ 0.9 keeps every documented demo relation
// from 3,000 lines up (their RFI is above 0.99 there: a dozen hosts or
// routes, hundreds of records each) and rejects a G with a handful of
// records per value: a two-valued F fully "determined" by a G with 4
// records per value has RFI 0.78, with 5 per value 0.83; at 8 per value
// (0.90) chance agreement has odds 2^-7 per value of G, and it passes.
//
// Best predictor rule: BestGiven is, among the tracked, non-identifier,
// non-constant G other than F's own companions, one that passes the derived rule if any does; otherwise
// the G with the highest RFI, provided it is at least PredictorMinRFI. Ties
// go to the smaller H(F|G), then the simpler G (less entropy), then the
// name. Ranking by RFI rather than by H(F|G) is what stops a field with
// thousands of values (latency_ms on a few thousand lines) from "predicting"
// another by chance: its H(F|G) is small but its RFI is about 0.
const (
	DerivedMaxResidual = 0.01
	DerivedMinRFI      = 0.9
	PredictorMinRFI    = 0.02
)

// fillEMI computes E[I] for every measured pair.
func (m *Model) fillEMI(s *Snapshot) {
	k := len(m.fields)
	s.emi = make([][]float64, k)
	flat := make([]float64, k*k)
	for i := range s.emi {
		s.emi[i] = flat[i*k : (i+1)*k]
		for j := range s.emi[i] {
			s.emi[i][j] = math.NaN()
		}
	}
	s.emiApprox = make([]bool, k*k)
	hists := make([]*countHist, k)
	for _, p := range m.pairs {
		for _, i := range []int{p.a, p.b} {
			if hists[i] == nil {
				h := histOf(m.fieldCounts(m.fields[i]))
				hists[i] = &h
			}
		}
	}
	// The pairs side by side: each is a pure function of two histograms,
	// and writes its own cells.
	spread(parallelMin*len(m.pairs), len(m.pairs), func(i int) {
		if m.cancelled() {
			return
		}
		p := m.pairs[i]
		v, approx := expectedMI(*hists[p.a], *hists[p.b])
		s.emi[p.a][p.b], s.emi[p.b][p.a] = v, v
		s.emiApprox[p.a*k+p.b], s.emiApprox[p.b*k+p.a] = approx, approx
	})
}

// fieldCounts is the count vector of f over the window, absent included
// (overflow values count once each).
func (m *Model) fieldCounts(f *field) []int {
	out := make([]int, 0, f.distinct+2)
	if a := int64(m.st.n) - f.present; a > 0 {
		out = append(out, int(a))
	}
	for id := 1; id < len(f.counts); id++ {
		if c := f.counts[id]; c > 0 {
			out = append(out, int(c))
		}
	}
	for i := int64(0); i < f.overflowed; i++ {
		out = append(out, 1)
	}
	return out
}

// ExpectedMutual is E[I(Fi;Fj)] in bits under the permutation model (NaN
// when the pair is not measured) and whether it is the approximation.
func (s *Snapshot) ExpectedMutual(i, j int) (bits float64, approx bool) {
	if i == j {
		return math.NaN(), false
	}
	return s.emi[i][j], s.emiApprox[i*len(s.Fields)+j]
}

// RFI is the reliable fraction of information about Fi that Fj gives,
// (I(Fi;Fj) − E[I])/H(Fi), NaN when the pair is not measured and 0 when Fi
// is constant. It can be slightly negative: Fj tells less than chance.
func (s *Snapshot) RFI(i, j int) float64 {
	if !s.HasPair(i, j) {
		return math.NaN()
	}
	h := s.Fields[i].Entropy
	if h <= 0 {
		return 0
	}
	e, _ := s.ExpectedMutual(i, j)
	return (s.Mutual(i, j) - e) / h
}

// Determines says whether Fj passes the derived rule for Fi.
func (s *Snapshot) Determines(j, i int) bool {
	g := &s.Fields[j]
	if !s.HasPair(i, j) || g.Kind == Identifier || g.Kind == Constant || s.Fields[i].Kind == Constant {
		return false
	}
	r := s.Cond(i, j)
	return r <= DerivedMaxResidual && r <= 0.1*s.Fields[i].Entropy && s.RFI(i, j) >= DerivedMinRFI
}

// predicts says whether Fj may be named as Fi's predictor: it passes the
// derived rule, or its RFI reaches PredictorMinRFI.
func (s *Snapshot) predicts(j, i int) bool {
	return s.Determines(j, i) || s.RFI(i, j) >= PredictorMinRFI
}

// classify finds each field's best predictor and marks derived fields (see
// the rules above).
func (s *Snapshot) classify() {
	const tie = 1e-12
	for i := range s.Fields {
		f := &s.Fields[i]
		if f.Kind == Constant || !f.Tracked {
			continue
		}
		best, bestDet, bestRFI, bestRes := -1, false, math.Inf(-1), math.Inf(1)
		for j := range s.Fields {
			g := &s.Fields[j]
			if j == i || !s.HasPair(i, j) || g.Kind == Identifier || g.Kind == Constant {
				continue
			}
			if g.Synthetic != nil && g.Synthetic.Source == f.Name {
				// A field's own companion (its buckets, its template) is
				// made from it: that it "predicts" it says nothing.
				continue
			}
			if !s.predicts(j, i) {
				continue
			}
			det, rfi, res := s.Determines(j, i), s.RFI(i, j), s.Cond(i, j)
			better := best < 0 || (det && !bestDet)
			if !better && det == bestDet {
				switch {
				case rfi > bestRFI+tie:
					better = true
				case rfi >= bestRFI-tie:
					b := &s.Fields[best]
					better = res < bestRes-tie || (math.Abs(res-bestRes) <= tie &&
						(g.Entropy < b.Entropy-tie || (math.Abs(g.Entropy-b.Entropy) <= tie && g.Name < b.Name)))
				}
			}
			if better {
				best, bestDet, bestRFI, bestRes = j, det, rfi, res
			}
		}
		if best < 0 {
			continue
		}
		f.BestGiven = s.Fields[best].Name
		f.Residual = bestRes
		f.RFI = bestRFI
		_, f.EMIApprox = s.ExpectedMutual(i, best)
		if f.Entropy > 0 {
			f.Uncertainty = s.Mutual(i, best) / f.Entropy
		} else {
			f.Uncertainty = 1
		}
		if f.Kind == Informative && bestDet {
			f.Kind = Derived
		}
	}
}
