package ingest

import "bitsift/model"

// The baseline calls below are for the goroutine that owns the Ingester
// (a screen sends it a request; it never calls the model itself).

// PinBaseline makes the current window the baseline that later snapshots
// compare with, and returns its profile.
func (in *Ingester) PinBaseline() *model.Profile { return in.model.PinBaseline() }

// UseRollingBaseline compares with the previous windows (see
// model.BaselineMode).
func (in *Ingester) UseRollingBaseline() { in.model.UseRollingBaseline() }

// SetBaseline compares with p (a saved report's profile); nil: none.
func (in *Ingester) SetBaseline(p *model.Profile) { in.model.SetBaseline(p) }
