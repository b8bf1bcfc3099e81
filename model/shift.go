package model

import (
	"math"
	"strconv"
)

// Shift compares one field's distribution now with the baseline.
//
// JSD is the Jensen–Shannon divergence in bits (0: same distribution, 1:
// disjoint) between the baseline and the window, over the baseline's
// listed values (its ProfileTopValues most frequent, and, when those are
// all its values, the window's most frequent new ones), "absent" and one
// "other" bucket for the rest; for a numeric field with many values, over
// the baseline's quantile bins instead. Values folded into "other" cannot
// shift, so the JSD is a lower bound of the divergence of the full
// distributions.
//
// EntropyChange is H(F) now minus H(F) in the baseline, bits. Z is the
// z-score of H(F) now against the field's own recent entropies (see
// Baselines), 0 while there are too few of them.
//
// Flagged (shift rule): JSD ≥ ShiftMinJSD and at least ShiftChanceFactor
// times the JSD that chance alone gives two samples of these sizes from one
// distribution, E[JSD] ≈ (B−1)/(8 ln 2)·(1/N₀ + 1/N₁) bits over B buckets
// (the chi-square limit of the divergence; common practice); or |Z| ≥
// ShiftMinZ with |EntropyChange| ≥ ShiftMinEntropyChange. Tuned on the
// demo stream against a baseline of its first 60,000 lines: its incident
// (lines 70,001–100,000) moves status by 0.020 bits, level by 0.014 and
// latency_ms by 0.011 (binned); over the whole 200,000 lines, where the
// incident is diluted, status still moves by 0.0029. Healthy stretches
// (lines 110,001–200,000) stay under 0.0002 bits, and a short healthy one
// (6,000 lines) under its chance bound (account: 0.0020 against 0.0086).
type Shift struct {
	JSD           float64
	EntropyChange float64
	Z             float64
	Binned        bool // JSD over the baseline's numeric bins
	Flagged       bool
}

// Shift rule thresholds (see Shift).
const (
	ShiftMinJSD           = 0.002
	ShiftChanceFactor     = 4
	ShiftMinZ             = 4
	ShiftMinEntropyChange = 0.05
)

// JensenShannon is the Jensen–Shannon divergence in bits of two
// distributions over the same buckets, each normalised first (0 when
// either is all zeros).
func JensenShannon(p, q []float64) float64 {
	sp, sq := 0.0, 0.0
	for i := range p {
		sp += p[i]
		sq += q[i]
	}
	if sp <= 0 || sq <= 0 {
		return 0
	}
	d := 0.0
	for i := range p {
		a, b := p[i]/sp, q[i]/sq
		m := (a + b) / 2
		if a > 0 {
			d += a / 2 * math.Log2(a/m)
		}
		if b > 0 {
			d += b / 2 * math.Log2(b/m)
		}
	}
	return nonNeg(d)
}

// fieldShift compares field i with its baseline profile bp (nil: the field
// was never seen in the baseline, which then had it absent everywhere).
func (m *Model) fieldShift(s *Snapshot, i int, bp *FieldProfile, baseRecords int) *Shift {
	f := m.fields[i]
	fs := &s.Fields[i]
	if fs.Kind == Identifier || f.hashed() || (bp != nil && bp.Kind == Identifier) {
		return nil
	}
	if bp == nil {
		bp = &FieldProfile{Name: f.name, Absent: baseRecords, Top: []ProfileValue{}}
	}
	var base, now []float64
	binned := false
	if bp.Bins != nil {
		base, now, binned = m.binnedBuckets(f, bp)
	}
	if !binned {
		base, now = m.valueBuckets(f, bp)
	}
	sh := &Shift{
		JSD:           JensenShannon(base, now),
		EntropyChange: fs.Entropy - bp.Entropy,
		Z:             m.entropyZ(f.name, fs.Entropy),
		Binned:        binned,
	}
	b := 0
	for k := range base {
		if base[k] > 0 || now[k] > 0 {
			b++
		}
	}
	chance := 0.0
	if baseRecords > 0 && m.st.n > 0 {
		chance = float64(b-1) / (8 * math.Ln2) * (1/float64(baseRecords) + 1/float64(m.st.n))
	}
	sh.Flagged = (sh.JSD >= ShiftMinJSD && sh.JSD >= ShiftChanceFactor*chance) ||
		(math.Abs(sh.Z) >= ShiftMinZ && math.Abs(sh.EntropyChange) >= ShiftMinEntropyChange)
	return sh
}

// valueBuckets lays out baseline and window counts over the buckets of a
// categorical field: absent, other, then the listed values.
func (m *Model) valueBuckets(f *field, bp *FieldProfile) (base, now []float64) {
	n := m.st.n
	base = []float64{float64(bp.Absent), float64(bp.Other)}
	now = []float64{float64(n - int(f.present)), 0}
	listed := 0
	seen := map[string]bool{}
	for _, v := range bp.Top {
		seen[v.Value] = true
		c := 0
		if id, ok := f.idOf(v.Value); ok {
			c = int(f.counts[id])
		}
		base = append(base, float64(v.Count))
		now = append(now, float64(c))
		listed += c
	}
	if bp.Other == 0 {
		// The baseline listed all its values: the window's frequent new
		// ones can be told apart (their baseline count is 0).
		for _, v := range m.top(f, ProfileTopValues) {
			if v.Absent || seen[v.Value] {
				continue
			}
			base = append(base, 0)
			now = append(now, float64(v.Count))
			listed += v.Count
		}
	}
	now[1] = float64(int(f.present) - listed)
	return base, now
}

// binnedBuckets lays out a numeric field over the baseline's bins, plus
// absent and "not a number"; ok is false when the field keeps no text.
func (m *Model) binnedBuckets(f *field, bp *FieldProfile) (base, now []float64, ok bool) {
	if f.text == nil {
		return nil, nil, false
	}
	k := len(bp.Bins.Counts)
	base = make([]float64, k+2)
	now = make([]float64, k+2)
	// The bins hold every present baseline value (Top overlaps them), and
	// base[k+1], "not a number", stays 0: a binned field had only numbers.
	base[k] = float64(bp.Absent)
	for i, c := range bp.Bins.Counts {
		base[i] = float64(c)
	}
	now[k] = float64(m.st.n - int(f.present))
	for id := 1; id < len(f.counts); id++ {
		c := f.counts[id]
		if c == 0 {
			continue
		}
		x, err := strconv.ParseFloat(f.text[id], 64)
		if err != nil || math.IsNaN(x) {
			now[k+1] += float64(c)
			continue
		}
		now[binOf(bp.Bins.Edges, x)] += float64(c)
	}
	now[k+1] += float64(f.overflowed)
	return base, now, true
}
