package plan

import (
	"sort"
	"strings"

	"bitsift/companion"
	"bitsift/model"
)

// SamplingCaution is shown wherever a plan offers record reductions.
const SamplingCaution = "Sampling and collapsing delete whole records: the records left out are gone " +
	"for audits and investigations, and a rare event inside a routine class goes with them. " +
	"Defer to your retention policy, and keep every record of a class that holds findings."

// Record reductions: classes of routine records, which a pipeline can
// sample (keep one in N) or collapse (keep one of each run of duplicates,
// with a count).
//
// A class is routine when its records carry little information per byte:
// the mean surprisal of a class record, priced by the class itself
// (Σ over the fields of H(F | class), plug-in over the measured records),
// per byte of its lines, is at most RoutineRatio of the same for the whole
// sample. The fields that define the class are left out on both sides
// (knowing the class trivially fixes them), and so are the time and
// identifier fields, which every record carries and no class predicts.
// Entropies are Miller–Madow estimates (see entropyMM). Classes are one
// value of a low-entropy field; the other kind is records that repeat an earlier one within a
// minute in every field but the time and identifier fields.
const (
	// RoutineRatio is the most information per byte, against the whole
	// sample, a routine class may carry. A choice, not a law: at 0.75 the
	// demo's health checks qualify (about 0.70 of the stream's bits per
	// byte over 20,000 records) and its next most routine class does not
	// (PUT calls, 0.78). Over a few thousand records the estimates move by
	// a few hundredths, and classes near the line come and go.
	RoutineRatio = 0.75
	// MinClassShare is the smallest share of records a class must hold.
	MinClassShare = 0.01
	// MinReductionRecords is the fewest measured records classes are
	// judged on: a class of 1% then holds 50, enough for its entropies;
	// over fewer, small classes look routine by chance.
	MinReductionRecords = 5000
	// minClassRecords is the fewest records a class must hold to be judged.
	minClassRecords = 50
	// KeepOneIn is the sampling rate offered.
	KeepOneIn = 10
	// maxClassFields caps the fields classes are made of (the ones of
	// lowest entropy).
	maxClassFields = 12
	// maxClassValues is the most distinct values a class field may have.
	maxClassValues = 64
	// maxReductions caps the classes offered (each is compressed twice).
	maxReductions = 6
	// nearRuleBits is the most H(F|G) a dependency may leave to count as a
	// rule that nearly holds: the records that break it are findings.
	nearRuleBits = 0.1
	// dominantShare is the share of records with one value of G that must
	// agree on F for the others to count as breaking the rule.
	dominantShare = 0.9
)

// ReductionAction is what a reduction does with a class.
type ReductionAction string

// The reduction actions.
const (
	SampleRecords   ReductionAction = "sample"
	CollapseRecords ReductionAction = "collapse"
)

// ClassTerm is one condition of a class: the field has this value (or is
// absent).
type ClassTerm struct {
	Field string
	Path  []string // JSON key path, nil for other input
	Value TableValue
	JSON  bool // Value.Text is JSON text
	// Template, when set, is a message template (the companion's text,
	// masks such as <*> and <num> for the parts that vary): the term holds
	// for a message of Field that the template's pattern matches, and
	// Value is unused.
	Template string
}

// Reduction is one class of routine records and what reducing it costs
// and saves. Shares and sizes are over the measured records.
type Reduction struct {
	ID     string // stable within a plan: r1, r2, ...
	Class  string // for a person: route="/healthz"
	Terms  []ClassTerm
	Ignore []string // collapse: the fields left out of "duplicate"
	Span   string   // collapse: the span duplicates are looked for in
	Action ReductionAction
	// KeepOneIn is N for sampling; for collapsing, the mean records per
	// kept record.
	KeepOneIn    float64
	ShareRecords float64
	ShareBytes   float64
	// Saved is bytes per stream record, raw and zstd-compressed (the
	// sample written with and without the class's left-out records).
	Saved Size
	// BitsLostPerRecord is per stream record: the class's share, times the
	// share of its records left out, times what one of them carries.
	BitsLostPerRecord float64
	// BitsPerClassRecord is the information of one class record, bits: its
	// fields' entropies within the class, the time and identifier fields'
	// over the sample (for collapse: only those).
	BitsPerClassRecord float64
	// Ratio is the class's bits per byte over the sample's (see the
	// package comment); 0 for collapse.
	Ratio float64
	// Findings counts the class's records that broke a rule (one that
	// nearly holds over the window, or a baseline's), or were among the
	// most surprising records: sampling would delete that evidence.
	Findings int
	// FindingExamples says what some of them were.
	FindingExamples []string
	Pin             Pin // PinKeep: the user keeps the class whole
}

// Warning is the warning a reduction carries, "" when none.
func (r *Reduction) Warning() string {
	if r.Findings == 0 {
		return ""
	}
	return "holds findings: reducing it deletes evidence"
}

// recordHints are what Choose learns from the snapshot for the record
// reductions Measure finds.
type recordHints struct {
	classFields []string // low-entropy fields, lowest entropy first
	ignore      []string // time and identifier fields
	timeField   string
	idField     string // an identifier, for hash-based sampling
	rules       [][2]string
	templates   []string // fields with a template companion
	broken      []model.BrokenRule
	surprising  []map[string]string
}

// hints reads the snapshot (with its companions, for the findings) for
// the record reductions.
func hints(all, s *model.Snapshot) recordHints {
	h := recordHints{timeField: s.Input.TimeField}
	for i := range all.Fields {
		f := &all.Fields[i]
		if f.Synthetic != nil && strings.HasSuffix(f.Name, companion.TemplateSuffix) {
			h.templates = append(h.templates, f.Synthetic.Source)
		}
	}
	// A message is no identifier for a duplicate, however rarely it
	// repeats: it is what repeats.
	message := func(f *model.FieldStats) bool {
		for _, t := range h.templates {
			if t == f.Name {
				return true
			}
		}
		for _, v := range f.Top {
			if strings.Contains(v.Value, " ") {
				return true
			}
		}
		return false
	}
	type cand struct {
		name string
		h    float64
	}
	var cs []cand
	for i := range s.Fields {
		f := &s.Fields[i]
		switch {
		case f.Name == h.timeField:
			h.ignore = append(h.ignore, f.Name)
		case f.Kind == model.Identifier && message(f):
		case f.Kind == model.Identifier:
			h.ignore = append(h.ignore, f.Name)
			if h.idField == "" {
				h.idField = f.Name
			}
		case f.Kind != model.Constant && f.Distinct >= 2 && f.Distinct <= maxClassValues && f.Present > 0:
			cs = append(cs, cand{f.Name, f.Entropy})
		}
	}
	sort.SliceStable(cs, func(a, b int) bool { return cs[a].h < cs[b].h })
	for i, c := range cs {
		if i == maxClassFields {
			break
		}
		h.classFields = append(h.classFields, c.name)
	}
	for _, fi := range h.classFields {
		for _, gi := range h.classFields {
			f, g := s.Index(fi), s.Index(gi)
			if f == g || !s.HasPair(f, g) {
				continue
			}
			// A rule that nearly holds: G leaves little of F, and little
			// against what F carries (a field of a few rare values is left
			// with little by anything).
			c := s.Cond(f, g)
			if c > LosslessTolerance && c <= nearRuleBits && c <= nearRuleBits*s.Fields[f].Entropy &&
				!(s.RFI(f, g) < model.PredictorMinRFI) {
				h.rules = append(h.rules, [2]string{gi, fi})
			}
		}
	}
	if ch := all.Changes; ch != nil {
		h.broken = ch.Broken
		for _, r := range ch.Surprising {
			h.surprising = append(h.surprising, r.Record)
		}
	}
	return h
}

// describe writes a class's terms for a person: route="/healthz".
func describe(terms []ClassTerm) string {
	parts := make([]string, len(terms))
	for i, t := range terms {
		switch {
		case t.Template != "":
			parts[i] = t.Field + companion.TemplateSuffix + "=" + string(appendJSONString(nil, t.Template))
		case t.Value.Absent:
			parts[i] = t.Field + " absent"
		case t.JSON:
			parts[i] = t.Field + "=" + t.Value.Text
		default:
			parts[i] = t.Field + "=" + string(appendJSONString(nil, t.Value.Text))
		}
	}
	return strings.Join(parts, " ")
}
