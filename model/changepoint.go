package model

import (
	"math"
	"sort"
)

// Change points along log time. The timeline of a report (Model.Timeline)
// cuts the window's records, in the order they came, into chunks, measures
// one figure per chunk for each rule and field (the share of records
// breaking the rule, the divergence of the field's values from the
// window's), and finds where each figure's level rises and where it falls
// back with the cumulative sum (CUSUM) test of E. S. Page, "Continuous
// inspection schemes", Biometrika 41 (1954), in its two-phase form:
//
//   - the in-control level μ₀ and spread σ are the median and the scaled
//     median absolute deviation (1.4826·MAD, the normal-consistent robust
//     estimate) of the whole series, σ floored by the sampling spread the
//     figure has by chance alone, so a few bad chunks do not move them;
//     for a rule's share of breaking records, whose healthy level is the
//     low one and whose bad stretch may cover most of the window, μ₀ is
//     the lower quartile and σ the binomial spread at μ₀ (cusumAt);
//   - upward: S_k = max(0, S_{k−1} + z_k − κ) with z_k = (x_k − μ₀)/σ;
//     when S_k > h the level has risen, and the change began just after
//     the last chunk where S was 0 (Page's estimate of the change point);
//   - downward, from there: with μ₁ the mean z of the raised stretch so far,
//     D_k = max(0, D_{k−1} + μ₁/2 − z_k) (reference value halfway between
//     the two levels, as for a shift of size μ₁); when D_k > h the level is
//     back, from just after the last chunk where D was 0.
//
// κ = 0.5 and h = 8 (in σ units): the usual κ for a shift of one σ, and a
// threshold above the common 4–5 because a report runs the test on every
// rule and field at once, so a false alarm is rarer (the in-control average
// run length grows about exponentially with h).
const (
	cusumKappa = 0.5
	cusumH     = 8
)

// segment is a stretch [start, end) of chunks with a raised level.
type segment struct{ start, end int }

// cusumSegments finds the stretches where x rises above its in-control
// level; floor is the least σ (the figure's chance spread).
func cusumSegments(x []float64, floor float64) (segs []segment, mu0, sigma float64) {
	if len(x) < 4 {
		return nil, 0, 0
	}
	mu0 = median(x)
	dev := make([]float64, len(x))
	for i, v := range x {
		dev[i] = math.Abs(v - mu0)
	}
	return cusumAt(x, mu0, math.Max(1.4826*median(dev), floor)), mu0, math.Max(1.4826*median(dev), floor)
}

// cusumAt runs the two-phase test on x against the level mu0 and spread
// sigma.
func cusumAt(x []float64, mu0, sigma float64) (segs []segment) {
	if sigma <= 0 || len(x) < 4 {
		return nil
	}
	s, lastZero := 0.0, -1
	for k := 0; k < len(x); k++ {
		s = math.Max(0, s+(x[k]-mu0)/sigma-cusumKappa)
		if s == 0 {
			lastZero = k
		}
		if s <= cusumH {
			continue
		}
		start := lastZero + 1
		end, sum, n := len(x), 0.0, 0
		for j := start; j <= k; j++ {
			sum += (x[j] - mu0) / sigma
			n++
		}
		d, dZero := 0.0, k
		for j := k + 1; j < len(x); j++ {
			z := (x[j] - mu0) / sigma
			d = math.Max(0, d+sum/float64(n)/2-z)
			if d == 0 {
				dZero = j
				sum += z
				n++
			}
			if d > cusumH {
				end = dZero + 1
				break
			}
		}
		segs = append(segs, segment{start, end})
		s, lastZero, k = 0, end-1, end-1
	}
	return segs
}

// quantile is the q-quantile of x (nearest rank).
func quantile(x []float64, q float64) float64 {
	c := append([]float64(nil), x...)
	sort.Float64s(c)
	return c[min(len(c)-1, int(q*float64(len(c))))]
}

func median(x []float64) float64 {
	c := append([]float64(nil), x...)
	sort.Float64s(c)
	n := len(c)
	if n%2 == 1 {
		return c[n/2]
	}
	return (c[n/2-1] + c[n/2]) / 2
}
