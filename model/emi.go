package model

import (
	"math"
	"sort"
	"sync"
)

// Expected mutual information under the permutation model (Vinh, Epps and
// Bailey, "Information Theoretic Measures for Clusterings Comparison", JMLR
// 11, 2010, eq. 24): with the marginal counts a_i of F and b_j of G fixed and
// the records paired at random, a cell n_ij is hypergeometric, and
//
//	E[I] = Σ_i Σ_j Σ_{n=max(1,a_i+b_j−N)}^{min(a_i,b_j)} (n/N) log2(N·n/(a_i·b_j)) · P(n)
//	P(n) = a_i! b_j! (N−a_i)! (N−b_j)! / (N! n! (a_i−n)! (b_j−n)! (N−a_i−b_j+n)!)
//
// Two things keep it cheap without giving up exactness. Cells with the same
// pair of marginals (a, b) have the same inner sum, and log fields have many
// values sharing a count (most rare values occur once or twice), so the sum
// runs over distinct count pairs times their multiplicities. And the inner
// sum is walked outwards from the hypergeometric mode, stopping where P(n)
// falls below emiCutoff of its peak: P is log-concave, so what is left is
// smaller than the double rounding of the sum.
//
// Past emiMaxCountPairs distinct count pairs or emiMaxTerms inner terms the
// exact sum is not attempted; the first-order (chi-square) value
// (K_F−1)(K_G−1)/(2N ln 2) bits is used instead, capped at min(H(F), H(G))
// (no mutual information exceeds it), and the result is marked approximate.
const (
	emiCutoff        = 1e-17
	emiMaxCountPairs = 1 << 18
	emiMaxTerms      = 1 << 23
)

// lfact caches ln k! for k below lfactTable, shared by all models; larger
// k are computed (logFact), with the same function, so the values are the
// same either way. A table to N (eight bytes a record: 8 MB for a million)
// used to be kept for the largest window seen.
var lfact struct {
	once sync.Once
	t    []float64
}

const lfactTable = 1 << 16

// logFact is ln k!.
func logFact(k int) float64 {
	lfact.once.Do(fillLogTables)
	if k < lfactTable {
		return lfact.t[k]
	}
	v, _ := math.Lgamma(float64(k) + 1)
	return v
}

// lnInt caches ln k for k below lfactTable, as math.Log computes it (so a
// sum reads the same either way): the inner sum of E[I] takes one for
// every term, and math.Log was 9% of a report's CPU.
var lnInt []float64

func fillLogTables() {
	lfact.t = make([]float64, lfactTable)
	lnInt = make([]float64, lfactTable)
	for i := range lfact.t {
		lfact.t[i], _ = math.Lgamma(float64(i) + 1)
		lnInt[i] = math.Log(float64(i))
	}
}

// logInt is ln k for k ≥ 1.
func logInt(k int) float64 {
	if k < lfactTable {
		return lnInt[k]
	}
	return math.Log(float64(k))
}

// countHist is a count vector folded into distinct counts with their
// multiplicities.
type countHist struct {
	count []int
	mult  []int
}

func histOf(counts []int) countHist {
	m := map[int]int{}
	for _, c := range counts {
		if c > 0 {
			m[c]++
		}
	}
	h := countHist{}
	for c := range m {
		h.count = append(h.count, c)
	}
	sort.Ints(h.count)
	for _, c := range h.count {
		h.mult = append(h.mult, m[c])
	}
	return h
}

// ExpectedMutualInfo is E[I(F;G)] in bits under the permutation model for
// the marginal counts a of F and b of G (zero counts are ignored; both must
// sum to the same N). approx reports that the work bound was passed and the
// first-order value was used (see the constants above).
func ExpectedMutualInfo(a, b []int) (bits float64, approx bool) {
	return expectedMI(histOf(a), histOf(b))
}

func expectedMI(ha, hb countHist) (float64, bool) {
	n := 0
	ka, kb := 0, 0
	for i, c := range ha.count {
		n += c * ha.mult[i]
		ka += ha.mult[i]
	}
	for j := range hb.count {
		kb += hb.mult[j]
	}
	if n <= 1 || ka <= 1 || kb <= 1 {
		return 0, false
	}
	if len(ha.count)*len(hb.count) > emiMaxCountPairs || estimateTerms(ha, hb, n) > emiMaxTerms {
		return emiFirstOrder(ha, hb, n, ka, kb), true
	}
	N := float64(n)
	lfN := logFact(n)
	lfB, lfNB := make([]float64, len(hb.count)), make([]float64, len(hb.count))
	for j, b := range hb.count {
		lfB[j], lfNB[j] = logFact(b), logFact(n-b)
	}
	total := 0.0
	for i, a := range ha.count {
		lfA, lfNA := logFact(a), logFact(n-a)
		for j, b := range hb.count {
			fixed := lfA + lfB[j] + lfNA + lfNB[j] - lfN
			total += float64(ha.mult[i]*hb.mult[j]) * emiCell(a, b, n, N, fixed)
		}
	}
	return nonNeg(total / math.Ln2), false
}

// emiCell is the inner sum, in nats, for one cell with marginals a and b;
// fixed is ln(a! b! (N−a)! (N−b)! / N!).
func emiCell(a, b, n int, N float64, fixed float64) float64 {
	lo, hi := max(1, a+b-n), min(a, b)
	if lo > hi {
		return 0
	}
	mode := int(float64(a+1) * float64(b+1) / (N + 2))
	mode = min(max(mode, lo), hi)
	logP := fixed - logFact(mode) - logFact(a-mode) - logFact(b-mode) - logFact(n-a-b+mode)
	p0 := math.Exp(logP)
	lab := math.Log(N / (float64(a) * float64(b)))
	term := func(k int, p float64) float64 {
		x := float64(k)
		return p * x / N * (lab + logInt(k))
	}
	sum := term(mode, p0)
	p := p0
	for k := mode; k < hi; k++ {
		// P(k+1)/P(k) for the hypergeometric law.
		p *= float64(a-k) * float64(b-k) / (float64(k+1) * float64(n-a-b+k+1))
		if p < emiCutoff*p0 {
			break
		}
		sum += term(k+1, p)
	}
	p = p0
	for k := mode; k > lo; k-- {
		p *= float64(k) * float64(n-a-b+k) / (float64(a-k+1) * float64(b-k+1))
		if p < emiCutoff*p0 {
			break
		}
		sum += term(k-1, p)
	}
	return sum
}

// estimateTerms bounds the inner terms the exact sum would visit: about
// eight standard deviations of each cell's hypergeometric law, at most its
// range.
func estimateTerms(ha, hb countHist, n int) int {
	N := float64(n)
	t := 0.0
	for i, a := range ha.count {
		for j, b := range hb.count {
			r := float64(min(a, b))
			sd := math.Sqrt(float64(a) * float64(b) / N * (1 - float64(a)/N) * (1 - float64(b)/N))
			t += float64(ha.mult[i]*hb.mult[j]) * math.Min(r, 16*sd+2)
		}
	}
	return int(math.Min(t, math.MaxInt32))
}

func emiFirstOrder(ha, hb countHist, n, ka, kb int) float64 {
	v := float64(ka-1) * float64(kb-1) / (2 * float64(n) * math.Ln2)
	return math.Min(v, math.Min(histEntropy(ha, n), histEntropy(hb, n)))
}

func histEntropy(h countHist, n int) float64 {
	N := float64(n)
	s := 0.0
	for i, c := range h.count {
		p := float64(c) / N
		s -= float64(h.mult[i]) * p * math.Log2(p)
	}
	return s
}

// AdjustedMutualInfo is the adjusted mutual information of two labelings
// given as contingency counts (rows: values of one field, columns: of the
// other), AMI = (I − E[I]) / (avg(H1, H2) − E[I]), with avg "arithmetic",
// "max", "min" or "geometric" (Vinh et al. 2010). It is kept as a check of
// ExpectedMutualInfo against published values.
func AdjustedMutualInfo(table [][]int, avg string) float64 {
	var rows, cols []int
	n := 0
	for i, r := range table {
		rows = append(rows, 0)
		for j, c := range r {
			for len(cols) <= j {
				cols = append(cols, 0)
			}
			rows[i] += c
			cols[j] += c
			n += c
		}
	}
	h1, h2 := EntropyOfCounts(rows), EntropyOfCounts(cols)
	var cells []int
	for _, r := range table {
		cells = append(cells, r...)
	}
	mi := h1 + h2 - EntropyOfCounts(cells)
	emi, _ := ExpectedMutualInfo(rows, cols)
	var norm float64
	switch avg {
	case "max":
		norm = math.Max(h1, h2)
	case "min":
		norm = math.Min(h1, h2)
	case "geometric":
		norm = math.Sqrt(h1 * h2)
	default:
		norm = (h1 + h2) / 2
	}
	if norm-emi == 0 {
		return 1
	}
	return (mi - emi) / (norm - emi)
}
