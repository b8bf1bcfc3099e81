package plan

import (
	"fmt"
	"math"
	"sort"

	"bitsift/model"
)

// chooser holds the state of one Choose call. Indices are into the
// snapshot's Fields.
type chooser struct {
	s       *model.Snapshot
	opt     Options
	dropped []bool
	// exact[i]: field i is dropped as exactly derived, so some kept field
	// must keep determining it.
	exact []bool
}

// Choose picks the fields to drop from the snapshot's figures: pinned drops
// first, then constants, then exactly derived fields (largest first, each
// needing a kept determinant), then, within opt.MaxLoss, the fields that
// lose fewest bits per byte saved. It reads nothing but s, so it is cheap
// enough to call on every change of a pin.
func Choose(s *model.Snapshot, opt Options) *Plan {
	// Fields bitsift made itself are not in the log: there is nothing to
	// drop, and nothing to rebuild from.
	all := s
	s = s.LogFields()
	c := &chooser{s: s, opt: opt, dropped: make([]bool, len(s.Fields)), exact: make([]bool, len(s.Fields))}
	pins := func(i int) Pin { return opt.Pins[s.Fields[i].Name] }
	free := func(i int) bool {
		f := &s.Fields[i]
		return pins(i) == Unpinned && f.Present > 0 && opt.inexact[f.Name] == ""
	}
	for i := range s.Fields {
		if pins(i) == PinDrop {
			c.dropped[i] = true
		}
	}
	for i, f := range s.Fields {
		if free(i) && f.Kind == model.Constant {
			c.dropped[i] = true
		}
	}
	// Exactly derived fields, largest first: dropping the bigger of two
	// fields that determine each other saves more.
	for _, i := range c.order(func(i int) float64 { return -s.Fields[i].BytesPerRecord }) {
		f := &s.Fields[i]
		if !free(i) || c.dropped[i] || f.Kind == model.Identifier {
			continue
		}
		if g := c.determinant(i); g < 0 || c.tableCost(i, g) >= f.BytesPerRecord {
			continue
		}
		c.dropped[i], c.exact[i] = true, true
		if !c.feasible() {
			c.dropped[i], c.exact[i] = false, false
		}
	}
	if opt.MaxLoss > 0 {
		c.lossy(free)
	}
	p := c.plan()
	p.hints, p.recordPins = hints(all, s), opt.RecordPins
	return p
}

// lossy drops, cheapest bits per byte first, the fields that fit in the
// loss budget.
func (c *chooser) lossy(free func(int) bool) {
	s := c.s
	cost := func(i int) float64 {
		if s.Fields[i].BytesPerRecord == 0 {
			return math.Inf(1)
		}
		_, bits := c.predictor(i)
		return bits / s.Fields[i].BytesPerRecord
	}
	for _, i := range c.order(cost) {
		if !free(i) || c.dropped[i] {
			continue
		}
		c.dropped[i] = true
		if !c.feasible() || c.bitsLost() > c.opt.MaxLoss+1e-12 {
			c.dropped[i] = false
		}
	}
}

// order returns the field indices sorted by key, then name.
func (c *chooser) order(key func(int) float64) []int {
	idx := make([]int, len(c.s.Fields))
	keys := make([]float64, len(idx))
	for i := range idx {
		idx[i], keys[i] = i, key(i)
	}
	sort.SliceStable(idx, func(a, b int) bool {
		ka, kb := keys[idx[a]], keys[idx[b]]
		if ka != kb {
			return ka < kb
		}
		return c.s.Fields[idx[a]].Name < c.s.Fields[idx[b]].Name
	})
	return idx
}

// usable says whether kept field g may rebuild or predict field f: the
// pair is measured, g is no identifier or constant, and chance cannot
// explain the dependency: its reliable fraction of information is at
// least minRFI (the model's rules: model.DerivedMinRFI to rebuild,
// model.PredictorMinRFI to predict).
func (c *chooser) usable(f, g int, minRFI float64) bool {
	s := c.s
	gf := &s.Fields[g]
	return f != g && !c.dropped[g] && s.HasPair(f, g) && gf.Kind != model.Identifier &&
		gf.Kind != model.Constant && gf.Distinct > 0 && !(s.RFI(f, g) < minRFI)
}

// determinant returns the kept field that determines f with the smallest
// table (fewest values), or -1.
func (c *chooser) determinant(f int) int {
	best := -1
	for g := range c.s.Fields {
		if !c.usable(f, g, model.DerivedMinRFI) || c.s.Cond(f, g) > LosslessTolerance {
			continue
		}
		if best < 0 || c.s.Fields[g].Distinct < c.s.Fields[best].Distinct {
			best = g
		}
	}
	return best
}

// predictor returns the kept field that leaves least of f, and H(f|it);
// -1 and H(f) when there is none better than nothing.
func (c *chooser) predictor(f int) (int, float64) {
	best, bits := -1, c.s.Fields[f].Entropy
	for g := range c.s.Fields {
		if !c.usable(f, g, model.PredictorMinRFI) {
			continue
		}
		if r := c.s.Cond(f, g); r < bits-1e-12 || (best >= 0 && r <= bits+1e-12 && c.s.Fields[g].Distinct < c.s.Fields[best].Distinct) {
			best, bits = g, r
		}
	}
	return best, bits
}

// feasible says whether every exactly derived field still has a kept
// determinant. Functional dependence is transitive, so a field whose
// determinant is dropped for being derived itself is still determined by
// what determines that one; this check finds it.
func (c *chooser) feasible() bool {
	for i, e := range c.exact {
		if e && c.dropped[i] && c.determinant(i) < 0 {
			return false
		}
	}
	return true
}

// bitsLost is the chain-rule bound Σ H(D_i | predictor) over the dropped
// fields.
func (c *chooser) bitsLost() float64 {
	sum := 0.0
	for i, d := range c.dropped {
		switch {
		case !d || c.s.Fields[i].Kind == model.Constant:
		case c.opt.Pins[c.s.Fields[i].Name] == PinDrop:
			sum += c.s.Fields[i].Entropy
		default:
			_, bits := c.predictor(i)
			sum += bits
		}
	}
	return sum
}

// valueBytes is the mean length of f's value text where present.
func (c *chooser) valueBytes(f int) float64 {
	fs := &c.s.Fields[f]
	if fs.Present == 0 {
		return 0
	}
	return max(fs.BytesPerRecord*float64(c.s.Records)/float64(fs.Present)-float64(len(fs.Name)), 0)
}

// batch is the number of records a table is spread over.
func (c *chooser) batch() int {
	if c.opt.Batch > 0 {
		return c.opt.Batch
	}
	return max(min(c.s.Records, DefaultBatch), 1)
}

// tableCost estimates the bytes per record of the table that rebuilds f
// from g: one row per value of g, each the two keys and values and a few
// bytes of punctuation.
func (c *chooser) tableCost(f, g int) float64 {
	fs, gs := &c.s.Fields[f], &c.s.Fields[g]
	row := float64(len(fs.Name)+len(gs.Name)+8) + c.valueBytes(f) + c.valueBytes(g)
	return float64(gs.Distinct) * row / float64(c.batch())
}

// plan writes the choice out.
func (c *chooser) plan() *Plan {
	s := c.s
	p := &Plan{MaxLoss: c.opt.MaxLoss, Records: s.Records, Format: s.Input.Format, Lossless: true}
	var kept []int
	for i := range s.Fields {
		f := &s.Fields[i]
		pf := Field{Name: f.Name, Kind: f.Kind, Pin: c.opt.Pins[f.Name], Action: Keep,
			Entropy: f.Entropy, BytesPerRecord: f.BytesPerRecord}
		switch {
		case !c.dropped[i]:
			pf.Reason = c.keepReason(i)
			kept = append(kept, i)
		case f.Kind == model.Constant:
			pf.Action, pf.Reason, pf.Exact = Drop, "constant: its value is kept once", c.opt.inexact[f.Name] == ""
			if len(f.Top) > 0 && !f.Top[0].Absent {
				pf.Value = f.Top[0].Value
			}
			p.EstimatedSaving += f.BytesPerRecord - (f.BytesPerRecord / float64(c.batch()))
		default:
			g, bits := c.predictor(i)
			pf.BitsLost = bits
			p.EstimatedSaving += f.BytesPerRecord
			switch {
			case pf.Pin == PinDrop:
				// The user asked for it gone: no table is shipped, so
				// nothing rebuilds it, whatever determines it.
				pf.Action, pf.BitsLost = Drop, f.Entropy
				pf.Reason = fmt.Sprintf("no table: %.3g bits lost", f.Entropy)
				if g >= 0 {
					pf.Reason += ", " + s.Fields[g].Name + " would rebuild it"
				}
			case g >= 0 && bits <= LosslessTolerance && c.opt.inexact[f.Name] == "":
				g = c.determinant(i)
				pf.Action, pf.Exact, pf.BitsLost = Derive, true, 0
				pf.From = []string{s.Fields[g].Name}
				pf.Reason = "determined by " + s.Fields[g].Name
				p.EstimatedSaving -= c.tableCost(i, g)
			case g >= 0:
				pf.Action, pf.From = Derive, []string{s.Fields[g].Name}
				pf.Reason = fmt.Sprintf("mostly follows %s: %.3g bits lost", s.Fields[g].Name, bits)
				p.EstimatedSaving -= c.tableCost(i, g)
			default:
				pf.Action = Drop
				pf.Reason = fmt.Sprintf("low information: %.3g bits lost", bits)
			}
			if pf.Pin == PinDrop {
				pf.Reason = "pinned: " + pf.Reason
			}
			p.BitsLost += pf.BitsLost
		}
		if !pf.Exact && pf.Action != Keep {
			p.Lossless = false
		}
		p.Fields = append(p.Fields, pf)
	}
	sort.SliceStable(p.Fields, func(a, b int) bool { return p.Fields[a].Name < p.Fields[b].Name })
	all := make([]int, len(s.Fields))
	for i := range all {
		all[i] = i
	}
	if c.opt.RecordTimes && s.Records > 1 && s.Newest > s.Oldest {
		p.RecordsPerSecond = float64(s.Records-1) / (float64(s.Newest-s.Oldest) / 1e9)
	}
	p.EntropyBefore = ChainBound(s, all)
	p.EntropyAfter = ChainBound(s, kept)
	if p.BitsLost > c.opt.MaxLoss+1e-12 {
		p.Notes = append(p.Notes, fmt.Sprintf("the pinned drops lose %.3g bits per record, more than --max-loss %g", p.BitsLost, c.opt.MaxLoss))
	}
	for name, why := range c.opt.inexact {
		p.Notes = append(p.Notes, name+": not offered as lossless: "+why)
	}
	sort.Strings(p.Notes)
	return p
}

// keepReason says in a few words why field i stays.
func (c *chooser) keepReason(i int) string {
	f := &c.s.Fields[i]
	switch {
	case c.opt.Pins[f.Name] == PinKeep:
		return "pinned"
	case f.Present == 0:
		return "absent from the window"
	case c.opt.inexact[f.Name] != "":
		return "did not rebuild exactly"
	}
	for j, e := range c.exact {
		if e && c.dropped[j] && c.determinant(j) == i {
			return "determines " + c.s.Fields[j].Name
		}
	}
	switch f.Kind {
	case model.Identifier:
		return "identifier: every value new"
	case model.Derived:
		return fmt.Sprintf("nearly determined by %s, not exactly", f.BestGiven)
	}
	if !f.Tracked {
		return "not measured in pairs"
	}
	return "informative"
}
