package model

// LogFields returns a copy of s without the fields bitsift made itself
// (companions such as latency_ms~log): the view of the figures that speaks
// only of what the log holds, for a drop plan. Per-field figures are copied
// as they are (a best predictor that was a companion stays named); the pair
// tables are re-indexed.
func (s *Snapshot) LogFields() *Snapshot {
	var keep []int
	for i := range s.Fields {
		if s.Fields[i].Synthetic == nil {
			keep = append(keep, i)
		}
	}
	if len(keep) == len(s.Fields) {
		return s
	}
	c := *s
	k := len(keep)
	c.Fields = make([]FieldStats, k)
	for a, i := range keep {
		c.Fields[a] = s.Fields[i]
	}
	sub := func(m [][]float64) [][]float64 {
		if m == nil {
			return nil
		}
		out := make([][]float64, k)
		flat := make([]float64, k*k)
		for a, i := range keep {
			out[a] = flat[a*k : (a+1)*k]
			for b, j := range keep {
				out[a][b] = m[i][j]
			}
		}
		return out
	}
	c.joint, c.emi = sub(s.joint), sub(s.emi)
	if s.emiApprox != nil {
		n := len(s.Fields)
		c.emiApprox = make([]bool, k*k)
		for a, i := range keep {
			for b, j := range keep {
				c.emiApprox[a*k+b] = s.emiApprox[i*n+j]
			}
		}
	}
	return &c
}
