package model

// Determinant is a set of fields that together determine Target.
type Determinant struct{}

// Changes is what changed against the baseline.
type Changes struct{}

// Profile is a window's profile.
type Profile struct{}

// Shift compares a field with the baseline.
type Shift struct{}

func (m *Model) analyse(s *Snapshot, opt SnapshotOptions) {}
