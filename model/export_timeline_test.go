package model

// CUSUMSegmentsForTest exposes cusumSegments to the external tests.
func CUSUMSegmentsForTest(x []float64, floor float64) [][2]int {
	segs, _, _ := cusumSegments(x, floor)
	var out [][2]int
	for _, s := range segs {
		out = append(out, [2]int{s.start, s.end})
	}
	return out
}
