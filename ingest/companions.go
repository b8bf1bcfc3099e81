package ingest

import (
	"bitsift/model"
	"bitsift/parse"
)

// Companion fields are fields bitsift adds to each record beside the log's
// own, for two kinds of field whose raw entropy says little:
//
//   - a number with many distinct values (a latency, a size) gets
//     FIELD~log, its logarithmic bucket (see buckets.go), so that the
//     field's spread has an entropy that means something;
//   - free text (a message) gets FIELD~template, the text with its
//     variable parts masked and merged (see template.go), so that
//     H(msg~template | app) and the like are readable.
//
// The "~" marks the name as bitsift's; the model also knows them as
// synthetic, and reports say so. Which fields get companions is decided
// once, from the records of the detection sample, so that every record
// from the first on has them.
const (
	BucketSuffix   = "~log"
	TemplateSuffix = "~template"
)

// The companion rules, applied to the detection sample's records
// (common practice: thresholds chosen for this tool, no published source).
const (
	// A numeric field needs this many distinct values in the sample: status
	// codes and other small sets stay categorical.
	minNumericDistinct = 32
	// A text field needs this many records with it, at least half of its
	// values with two spaces or more (three words: a timestamp such as
	// "17/May/2015:10:05:03 +0000" is no message), and this many distinct
	// values, at least one per textRecordsPerDistinct records. Fields named
	// like timestamps (parse.IsTimeKey) never get templates.
	minTextPresent         = 8
	minTextDistinct        = 8
	textRecordsPerDistinct = 8
	// At most this many companions, as each costs pair tables.
	maxCompanions = 16
)

type companionKind int

const (
	bucketCompanion companionKind = iota
	templateCompanion
)

// companion is one field bitsift adds, made from the field source.
type companion struct {
	source, name string
	kind         companionKind
	buckets      buckets
	templates    *templater
}

func (c *companion) method() string {
	if c.kind == bucketCompanion {
		return "log10 buckets, 4 per decade"
	}
	return "message template: variable parts masked and merged"
}

// companions are the companion fields of a stream, in the order of their
// sources' first appearance.
type companions struct{ list []*companion }

// fieldSample gathers what the rules need about one field.
type fieldSample struct {
	name            string
	present, spaces int
	numeric         bool // every non-null value is a number
	distinct        map[string]struct{}
	distinctNumbers int
	distinctCapped  bool
}

// chooseCompanions applies the rules to the sample's records.
func chooseCompanions(sample []*parse.Record) companions {
	var order []*fieldSample
	byName := map[string]*fieldSample{}
	for _, rec := range sample {
		for i := 0; i < rec.Len(); i++ {
			k := rec.Key(i)
			fs := byName[string(k)]
			if fs == nil {
				fs = &fieldSample{name: string(k), numeric: true, distinct: map[string]struct{}{}}
				byName[fs.name] = fs
				order = append(order, fs)
			}
			v := rec.Value(i)
			fs.present++
			if spaces(v) >= 2 {
				fs.spaces++
			}
			null := isNull(v)
			if _, ok := parseNumber(v); !ok && !null {
				fs.numeric = false
			}
			if _, seen := fs.distinct[string(v)]; !seen && len(fs.distinct) < 4*minNumericDistinct {
				fs.distinct[string(v)] = struct{}{}
				if !null {
					fs.distinctNumbers++
				}
			}
		}
	}
	var cs companions
	for _, fs := range order {
		if len(cs.list) == maxCompanions {
			break
		}
		var c *companion
		switch {
		case fs.numeric && fs.distinctNumbers >= minNumericDistinct:
			c = &companion{source: fs.name, name: fs.name + BucketSuffix, kind: bucketCompanion}
		case !parse.IsTimeKey(fs.name) && fs.present >= minTextPresent && 2*fs.spaces >= fs.present &&
			len(fs.distinct) >= minTextDistinct && textRecordsPerDistinct*len(fs.distinct) >= fs.present:
			c = &companion{source: fs.name, name: fs.name + TemplateSuffix, kind: templateCompanion, templates: newTemplater()}
		default:
			continue
		}
		if byName[c.name] != nil {
			continue // the log has a field of that name already: keep it
		}
		cs.list = append(cs.list, c)
	}
	return cs
}

// unredacted leaves out the companions of redacted fields: a template
// keeps a message's words and a bucket a number's range, and nothing may
// be derived from a value that is meant to be hidden (its hash has no
// words and no magnitude, so no companion can be made from it either).
func (cs *companions) unredacted(r *Redactor) {
	if r == nil {
		return
	}
	kept := cs.list[:0]
	for _, c := range cs.list {
		if !r.Redacting(c.source) {
			kept = append(kept, c)
		}
	}
	cs.list = kept
}

// apply appends the companion fields to rec.
func (cs *companions) apply(rec *parse.Record) {
	for _, c := range cs.list {
		v, ok := rec.Get(c.source)
		if !ok {
			continue
		}
		switch c.kind {
		case bucketCompanion:
			rec.AddString(c.name, c.buckets.label(v))
		case templateCompanion:
			rec.AddKV(c.name, c.templates.template(v))
		}
	}
}

// warm runs the sample's messages through the template trees once before
// their records get templates, so that the first records do not keep the
// unmerged templates of a tree that has seen only them.
func (cs *companions) warm(sample []*parse.Record) {
	for _, c := range cs.list {
		if c.kind != templateCompanion {
			continue
		}
		for _, rec := range sample {
			if v, ok := rec.Get(c.source); ok {
				c.templates.template(v)
			}
		}
	}
}

// declare marks the companions as synthetic in m.
func (cs *companions) declare(m *model.Model) {
	for _, c := range cs.list {
		m.DeclareSynthetic(c.name, model.Synthetic{Source: c.source, Method: c.method()})
	}
}

func spaces(b []byte) int {
	n := 0
	for _, c := range b {
		if c == ' ' {
			n++
		}
	}
	return n
}

// isNull says whether v is a placeholder for "no number" ("-" or empty, as
// access logs write a missing size).
func isNull(v []byte) bool { return len(v) == 0 || len(v) == 1 && v[0] == '-' }
