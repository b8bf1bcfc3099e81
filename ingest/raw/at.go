package raw

// At returns the i-th kept line, oldest first (0 ≤ i < Len); the Line is
// the keeper's own, valid until the next Put.
func (s *Lines) At(i int) *Line { return s.at(i) }
