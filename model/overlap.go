package model

import "fmt"

// BaselineMinShared is the least share of a baseline's fields that the
// stream must also have for the comparison to mean anything: a baseline
// from an unrelated stream would flag every field as shifted (JSD 1).
const BaselineMinShared = 0.5

// SharedFields counts the baseline's fields (bitsift's own companions
// aside) that the snapshot has too, and how many it has in all.
func SharedFields(p *Profile, s *Snapshot) (shared, total int) {
	for _, f := range p.Fields {
		if isSyntheticName(f.Name) {
			continue
		}
		total++
		if s.Index(f.Name) >= 0 {
			shared++
		}
	}
	return shared, total
}

// CheckBaseline refuses a baseline that shares fewer than
// BaselineMinShared of its fields with the snapshot; a snapshot with no
// records yet passes (there is nothing to compare).
func CheckBaseline(p *Profile, s *Snapshot) error {
	if p == nil || s == nil || s.Records == 0 {
		return nil
	}
	shared, total := SharedFields(p, s)
	if total == 0 || float64(shared) >= BaselineMinShared*float64(total) {
		return nil
	}
	return fmt.Errorf("baseline %s shares %d of its %d fields with this stream (at least half needed): it is of another stream; make one from a healthy period of this one with report -o json", p.Source, shared, total)
}

func isSyntheticName(name string) bool {
	for i := 0; i < len(name); i++ {
		if name[i] == '~' {
			return true
		}
	}
	return false
}
