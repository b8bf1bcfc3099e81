package model

import "sort"

// BrokenRule is a dependency that held in the baseline (a Rule) and no
// longer holds: H(Target|Given) is now above DerivedMaxResidual bits, or
// window records pair a value of Given with a value of Target other than
// the baseline's (a violation) and the rule was exact in the baseline or
// the violations are more than one record in a thousand. The second case
// catches a rule that still holds but maps differently (a route now sent to
// another upstream everywhere), and a single misrouted record under a rule
// that had no exception.
// Examples list which value of Given now appears with a value of Target
// other than the baseline's, and in how many window records, most first
// (at most brokenExamples); Violations counts all such records.
type BrokenRule struct {
	Target       string
	Given        string
	BaselineBits float64
	NowBits      float64
	Violations   int
	Examples     []RuleBreak
}

// RuleBreak is one (given value, new target value) pair of a broken rule.
type RuleBreak struct {
	GivenValue   string
	TargetValue  string
	TargetAbsent bool // the record lacks Target
	Expected     string
	Count        int
}

const brokenExamples = 5

// brokenRules checks the baseline's rules against the window. A rule whose
// fields are not both measured as a pair now cannot be checked and is left
// out.
func (m *Model) brokenRules(s *Snapshot, base *Profile) []BrokenRule {
	out := []BrokenRule{}
	for _, r := range base.Rules {
		t, g := s.Index(r.Target), s.Index(r.Given)
		if t < 0 || g < 0 || !s.HasPair(t, g) {
			continue
		}
		now := s.Cond(t, g)
		br := BrokenRule{Target: r.Target, Given: r.Given, BaselineBits: r.Bits, NowBits: round9(now)}
		want := make(map[string]RuleValue, len(r.Map))
		for _, v := range r.Map {
			want[v.Given] = v
		}
		pr := m.pairs[m.pairAt[[2]int{min(t, g), max(t, g)}]]
		pr.m.each(func(k uint64, c int32) {
			ia, ib := uint32(k>>32), uint32(k)
			gi, ti := ia, ib
			if g == pr.b {
				gi, ti = ib, ia
			}
			if gi == absent {
				return
			}
			w, ok := want[m.valueText(g, gi)]
			if !ok {
				return // a value of Given the baseline did not have (or cut)
			}
			tv := m.valueText(t, ti)
			if w.Absent == (ti == absent) && (w.Absent || w.Target == tv) {
				return
			}
			br.Violations += int(c)
			br.Examples = append(br.Examples, RuleBreak{
				GivenValue: w.Given, TargetValue: tv, TargetAbsent: ti == absent, Expected: w.Target, Count: int(c),
			})
		})
		if now <= DerivedMaxResidual && (br.Violations == 0 || (r.Bits > 1e-9 && br.Violations*1000 <= m.st.n)) {
			continue
		}
		sort.Slice(br.Examples, func(i, j int) bool {
			a, b := br.Examples[i], br.Examples[j]
			if a.Count != b.Count {
				return a.Count > b.Count
			}
			if a.GivenValue != b.GivenValue {
				return a.GivenValue < b.GivenValue
			}
			return a.TargetValue < b.TargetValue
		})
		if len(br.Examples) > brokenExamples {
			br.Examples = br.Examples[:brokenExamples]
		}
		out = append(out, br)
	}
	sort.SliceStable(out, func(i, j int) bool { return out[i].Violations > out[j].Violations })
	return out
}
