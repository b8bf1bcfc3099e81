// Package plan chooses which fields of a log stream to drop before shipping
// it, measures what that saves, and proves that what it drops can be
// rebuilt.
//
// A plan keeps some fields, drops constants (their one value is kept once),
// derives fields that a kept field determines (a mapping table from the
// determinant's values rebuilds them; its size counts against the saving)
// and, when a loss budget allows, drops low-information fields outright.
// Units: information in bits per record, sizes in bytes per record.
//
// # Bits lost
//
// Dropping the set D while keeping K loses H(D|K) bits per record. By the
// chain rule, H(D|K) = Σ_i H(D_i | K, D_1..D_{i−1}) ≤ Σ_i H(D_i | K) ≤
// Σ_i H(D_i | G_i) for any kept G_i, because conditioning never adds
// entropy. A plan reports that last sum with G_i the kept field that leaves
// least of D_i (its predictor): an upper bound, so the loss it states is
// never less than the real one. A derived field's term is 0 exactly when
// its determinant is kept, which is why a determinant is never dropped in
// the same plan (of two fields that determine each other, one is kept).
//
// # The entropy bound
//
// Beside the measured sizes a plan gives a floor for storing the kept
// fields: their joint entropy H(K). Pairs are all the model measures, so
// the plan uses the chain rule along a spanning forest of the kept fields:
// H(K) ≤ Σ_{roots} H(F) + Σ_{edges} H(F | parent) = Σ H(F) − Σ_{edges} I(F;
// parent), tightest for the forest of greatest total mutual information
// (the tree Chow and Liu, 1968, choose for the same reason; from memory).
// Like every figure here it treats the window as the whole world: a field
// whose values are all new gets log2 N bits, though a fresh random id costs
// its full length to store.
//
// # Two steps
//
// Choose works from a model snapshot alone and is cheap (fields² at most):
// the plan screen calls it on every pin. Measure applies a plan to a Sample
// of raw records: it re-serialises them before and after in their input
// format, compresses both with zstd, builds the mapping tables, rebuilds the
// dropped fields and counts mismatches. Make does both and takes out of the
// lossless plan any field that does not rebuild exactly.
package plan

import "bitsift/model"

// Caution is shown wherever a plan is shown or exported.
const Caution = "Caution: dropping fields deletes data that audits, security investigations " +
	"and regulations may require. Check your retention obligations and local rules before applying this plan."

// RuleCaution is shown beside a plan that derives fields: a derivation is
// proven on the records measured, not on the records to come.
const RuleCaution = "A derived field can be rebuilt only while the rule it follows holds. If the rule " +
	"breaks later (a misrouted deploy, say), the dropped values are lost exactly when they matter: " +
	"keep such fields where that evidence counts, and re-check the plan against a baseline."

// Action is what a plan does with a field.
type Action string

// The actions.
const (
	Keep   Action = "keep"
	Drop   Action = "drop"   // deleted; a constant's value is kept once
	Derive Action = "derive" // deleted; rebuilt from a mapping table
)

// Pin is a user's choice for one field, which the plan follows.
type Pin int8

// The pins.
const (
	Unpinned Pin = iota
	PinKeep
	PinDrop
)

// String is the pin as the screen and the JSON name it.
func (p Pin) String() string {
	switch p {
	case PinKeep:
		return "keep"
	case PinDrop:
		return "drop"
	}
	return ""
}

// LosslessTolerance is the largest H(F|G), in bits, taken as "G determines
// F". The model's entropies are exact to about 1e-9 bits; a real exception
// in a window of a million records costs more than 1e-5 bits.
const LosslessTolerance = 1e-7

// DefaultBatch is the most records a sample (and the batch a mapping table
// is shipped with) holds.
const DefaultBatch = 100_000

// Options choose a plan.
type Options struct {
	// MaxLoss is the information the plan may lose, in bits per record
	// (0: lossless).
	MaxLoss float64
	// Pins are the user's keep/drop choices by field name.
	Pins map[string]Pin
	// Batch is the number of records a mapping table is shipped with, to
	// spread its size over (default min(window records, DefaultBatch)).
	Batch int
	// RecordPins are the user's choices for record reductions, by class:
	// PinKeep keeps the class whole, PinDrop reduces it even though it
	// holds findings.
	RecordPins map[string]Pin
	// RecordTimes: the snapshot's record times come from the records'
	// timestamps, so the record rate (and the saving per day) is known.
	RecordTimes bool

	// inexact names fields that failed to rebuild exactly, with why.
	inexact map[string]string
}

// Plan is a choice of fields to drop, with what it saves and loses.
type Plan struct {
	MaxLoss float64
	Records int    // records in the model's window
	Format  string // the stream's format
	// Fields lists every field of the snapshot, by name.
	Fields []Field
	// BitsLost is the chain-rule upper bound on the information lost, in
	// bits per record (see the package comment).
	BitsLost float64
	// Lossless: the plan loses nothing (every dropped field is constant or
	// exactly derived, and rebuilt with no mismatch where measured).
	Lossless bool
	// EntropyBefore and EntropyAfter are the entropy bounds of all fields
	// and of the kept fields, bits per record.
	EntropyBefore, EntropyAfter float64
	// EstimatedSaving is the key and value text of the dropped fields,
	// minus the estimated tables, bytes per record, from the model alone.
	EstimatedSaving float64
	// RecordsPerSecond is the record rate over the window from record
	// timestamps; 0 when unknown.
	RecordsPerSecond float64
	// Measured is filled by Measure; nil before.
	Measured *Measurement
	// Notes say what the plan could not do and why, for the reader.
	Notes []string
	// Reductions are the classes of routine records found on the measured
	// records (filled by Measure; see records.go).
	Reductions []Reduction

	hints      recordHints
	recordPins map[string]Pin
}

// Applied says whether the plan's exports carry the reduction: the user
// pinned it, or it holds no findings and the user did not keep it whole.
func (r *Reduction) Applied() bool {
	return r.Pin == PinDrop || r.Pin == Unpinned && r.Findings == 0
}

// Field is one field's place in a plan.
type Field struct {
	Name string
	Kind model.Kind
	Pin  Pin
	// Action and Reason: what the plan does and why, in a few words.
	Action Action
	Reason string
	// From is the determinant (or predictor) a derived field is rebuilt
	// from.
	From []string
	// Exact: a derived field is determined by From (H(F|From) = 0).
	Exact bool
	// Entropy is H(F) over the window; BitsLost is H(F|From) for a derived
	// field, H(F) for a dropped one with no predictor, 0 for a constant.
	Entropy  float64
	BitsLost float64
	// BytesPerRecord: the field's key and value text per record.
	BytesPerRecord float64
	// Value is a constant's value, kept once.
	Value string

	// Filled by Measure, over the sample.
	TableEntries  int     // mapping table rows (1 for a constant)
	Mismatches    int     // sample records where the rebuilt value differs
	SampleEntropy float64 // H(F) over the sample, bits
	Huffman       float64 // expected Huffman code length over the sample, bits
	// Table rebuilds a dropped constant or derived field: nil for the rest
	// and before Measure.
	Table *Table
}

// Dropped says whether the plan deletes the field.
func (f *Field) Dropped() bool { return f.Action != Keep }

// Field returns the named field of the plan, or nil.
func (p *Plan) Field(name string) *Field {
	for i := range p.Fields {
		if p.Fields[i].Name == name {
			return &p.Fields[i]
		}
	}
	return nil
}

// DroppedNames lists the fields the plan deletes (dropped and derived), by
// name.
func (p *Plan) DroppedNames() []string {
	var out []string
	for _, f := range p.Fields {
		if f.Dropped() {
			out = append(out, f.Name)
		}
	}
	return out
}
