// Package companion makes the fields bitsift adds to each record beside
// the log's own, for two kinds of field whose raw entropy says little:
//
//   - a number with many distinct values (a latency, a size) gets
//     FIELD~log, its logarithmic bucket (see buckets.go), so that the
//     field's spread has an entropy that means something;
//   - free text (a message) gets FIELD~template, the id of its message
//     template: the text with its variable parts masked and merged (see
//     template.go), so that H(msg~template | app) and the like are
//     readable. The id is the group's for the whole run; Set.Text gives
//     the group's current text to show beside it.
//
// The "~" marks the name as bitsift's; the model also knows them as
// synthetic, and reports say so. Which fields get companions is decided
// from a sample of records (Choose); a later sample (a new file) may add
// companions for fields not seen before (Set.Merge).
package companion

import (
	"strconv"
	"strings"

	"bitsift/model"
	"bitsift/parse"
)

// Suffixes of the companion names.
const (
	BucketSuffix   = "~log"
	TemplateSuffix = "~template"
)

// The companion rules, applied to a sample's records (common practice:
// thresholds chosen for this tool, no published source).
const (
	// A numeric field needs this many distinct values in the sample: status
	// codes and other small sets stay categorical.
	minNumericDistinct = 32
	// A text field needs this many records with it, at least half of its
	// values with a space (two words or more; a timestamp such as
	// "17/May/2015:10:05:03 +0000" is no message, and fields named like
	// timestamps never get templates), and this many distinct values, at
	// least one per textRecordsPerDistinct records. Fields named like
	// messages (msg, message, ...) always get one.
	minTextPresent         = 8
	minTextDistinct        = 4
	textRecordsPerDistinct = 64
	// At most this many companions, as each costs pair tables.
	maxCompanions = 16
)

// Companion is one field bitsift adds to records, made from another.
type Companion interface {
	Source() string // the field it is made from
	Name() string   // its own name (Source plus a suffix)
	Method() string // how it is made, in a few words
	// Value is the companion's value for the source value v; the slice is
	// valid until the next call.
	Value(v []byte) []byte
}

// Options adjust Choose.
type Options struct {
	// Templates names fields that get a template whatever the sample says
	// (--template FIELD).
	Templates []string
}

// Set is the companions of a stream, in the order of their sources' first
// appearance. The zero Set has none.
type Set struct {
	list      []Companion
	byName    map[string]Companion
	recording *Recording // see replay.go
	replay    *Recording
}

// List returns the companions.
func (s *Set) List() []Companion { return s.list }

// Len is the number of companions.
func (s *Set) Len() int { return len(s.list) }

// fieldSample gathers what the rules need about one field.
type fieldSample struct {
	name            string
	present, spaces int
	numeric         bool // every non-null value is a number
	integer         bool // every non-null value is a whole number
	epoch           bool // every non-null value is an epoch time in seconds or ms
	distinct        map[string]struct{}
	distinctNumbers int
}

// Choose applies the rules to the sample's records.
func Choose(sample []*parse.Record, opt Options) *Set {
	var order []*fieldSample
	byName := map[string]*fieldSample{}
	for _, rec := range sample {
		for i := 0; i < rec.Len(); i++ {
			k := rec.Key(i)
			fs := byName[string(k)]
			if fs == nil {
				fs = &fieldSample{name: string(k), numeric: true, integer: true, epoch: true, distinct: map[string]struct{}{}}
				byName[fs.name] = fs
				order = append(order, fs)
			}
			v := rec.Value(i)
			fs.present++
			if spaces(v) >= 1 {
				fs.spaces++
			}
			null := isNull(v)
			if x, ok := parseNumber(v); !ok && !null {
				fs.numeric, fs.integer, fs.epoch = false, false, false
			} else if ok {
				if x != float64(int64(x)) {
					fs.integer = false
				}
				if !isEpoch(x) {
					fs.epoch = false
				}
			}
			if _, seen := fs.distinct[string(v)]; !seen && len(fs.distinct) < 4*minNumericDistinct {
				fs.distinct[string(v)] = struct{}{}
				if !null {
					fs.distinctNumbers++
				}
			}
		}
	}
	forced := map[string]bool{}
	for _, f := range opt.Templates {
		forced[f] = true
	}
	s := &Set{}
	for _, fs := range order {
		if len(s.list) == maxCompanions {
			break
		}
		var c Companion
		switch {
		case forced[fs.name]:
			c = NewTemplates(fs.name)
		case fs.numeric && fs.distinctNumbers >= minNumericDistinct && !noBuckets(fs):
			c = &Buckets{source: fs.name, name: fs.name + BucketSuffix}
		case freeText(fs):
			c = NewTemplates(fs.name)
		default:
			continue
		}
		if byName[c.Name()] != nil {
			continue // the log has a field of that name already: keep it
		}
		s.add(c)
	}
	// Forced fields not in the sample get their template all the same.
	for _, f := range opt.Templates {
		if byName[f] == nil && byName[f+TemplateSuffix] == nil {
			s.add(NewTemplates(f))
		}
	}
	return s
}

func (s *Set) add(c Companion) {
	if s.byName == nil {
		s.byName = map[string]Companion{}
	}
	if s.byName[c.Name()] != nil {
		return
	}
	s.list = append(s.list, c)
	s.byName[c.Name()] = c
}

// Keep keeps only the companions for which keep is true.
func (s *Set) Keep(keep func(Companion) bool) {
	kept := s.list[:0]
	for _, c := range s.list {
		if keep(c) {
			kept = append(kept, c)
		} else {
			delete(s.byName, c.Name())
		}
	}
	s.list = kept
}

// Merge adds the companions of o whose names s does not have yet, and
// returns them (to be declared).
func (s *Set) Merge(o *Set) []Companion {
	var added []Companion
	for _, c := range o.list {
		if len(s.list) == maxCompanions {
			break
		}
		if s.byName[c.Name()] == nil {
			s.add(c)
			added = append(added, c)
		}
	}
	return added
}

// freeText says whether a field reads as free text.
func freeText(fs *fieldSample) bool {
	// log.time (an inner line's own time, renamed) is a time as time is.
	last := fs.name[strings.LastIndexByte(fs.name, '.')+1:]
	if parse.IsTimeKey(fs.name) || parse.IsTimeKey(last) || fs.numeric {
		return false
	}
	if isMessageKey(fs.name) {
		return true // a message, however few and alike the sample's
	}
	if fs.present < minTextPresent || len(fs.distinct) < minTextDistinct {
		return false
	}
	return 2*fs.spaces >= fs.present && textRecordsPerDistinct*len(fs.distinct) >= fs.present
}

// messageKeys are field names that hold free text by convention.
var messageKeys = []string{"msg", "message", "log", "text", "body", "error", "err", "description", "reason"}

func isMessageKey(name string) bool {
	n := strings.ToLower(name)
	for _, k := range messageKeys {
		if n == k {
			return true
		}
	}
	return false
}

// noBuckets says whether a numeric field is an identifier, a process id or
// an epoch time: their size on a log scale means nothing.
func noBuckets(fs *fieldSample) bool {
	if parse.IsTimeKey(fs.name) || isIDKey(fs.name) {
		return true
	}
	return fs.integer && fs.epoch
}

// isIDKey: names of identifiers, process and thread ids, ports, line
// numbers (common practice for log field names).
func isIDKey(name string) bool {
	n := strings.ToLower(name)
	switch n {
	case "id", "pid", "ppid", "tid", "uid", "gid", "euid", "thread", "thread_id", "port", "line", "lineno",
		"seq", "sequence", "offset", "serial", "node":
		return true
	}
	for _, suf := range []string{"_id", "-id", ".id", "_pid", "_tid", "_port", "_seq"} {
		if strings.HasSuffix(n, suf) {
			return true
		}
	}
	return len(name) > 2 && (strings.HasSuffix(name, "Id") || strings.HasSuffix(name, "ID"))
}

// isEpoch: a number of seconds, milliseconds, microseconds (the journal's
// timestamps) or nanoseconds since 1970 between the years 2000 and 2100
// (946684800 and 4102444800 seconds).
func isEpoch(x float64) bool {
	for _, unit := range []float64{1, 1e3, 1e6, 1e9} { // seconds to nanoseconds
		if x >= 946684800*unit && x < 4102444800*unit {
			return true
		}
	}
	return false
}

// Apply appends the companion fields to rec.
func (s *Set) Apply(rec *parse.Record) {
	for _, c := range s.list {
		v, ok := rec.Get(c.Source())
		if !ok {
			continue
		}
		if t, ok := c.(*Templates); ok {
			s.applyTemplate(t, v, rec)
			continue
		}
		rec.AddKV(c.Name(), c.Value(v))
	}
}

// Warm runs the sample's messages through the template trees once before
// their records get templates, so that the tree has seen the sample's
// variety (ids are stable either way; this only spares the first texts
// shown).
func (s *Set) Warm(sample []*parse.Record) {
	for _, c := range s.list {
		t, ok := c.(*Templates)
		if !ok {
			continue
		}
		for _, rec := range sample {
			if v, ok := rec.Get(t.source); ok {
				t.Value(v)
			}
		}
	}
}

// Declare marks the companions as synthetic in m.
func (s *Set) Declare(m *model.Model) { Declare(m, s.list) }

// Declare marks cs as synthetic in m.
func Declare(m *model.Model, cs []Companion) {
	for _, c := range cs {
		m.DeclareSynthetic(c.Name(), model.Synthetic{Source: c.Source(), Method: c.Method()})
	}
}

// Templates returns the template companion named name, if there is one.
func (s *Set) Templates(name string) (*Templates, bool) {
	t, ok := s.byName[name].(*Templates)
	return t, ok
}

// Text returns the current text of the template whose id is value, for
// the template companion named field.
func (s *Set) Text(field, value string) (string, bool) {
	t, ok := s.Templates(field)
	if !ok {
		return "", false
	}
	id, ok := ParseID(value)
	if !ok {
		return "", false
	}
	return t.Text(id)
}

// FormatID writes a template id as the companion's value: "#" and the
// number, in the order groups were made.
func FormatID(id int) string { return "#" + strconv.Itoa(id) }

// ParseID reads a value made by FormatID.
func ParseID(v string) (int, bool) {
	if len(v) < 2 || v[0] != '#' {
		return 0, false
	}
	n, err := strconv.Atoi(v[1:])
	return n, err == nil && n > 0
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
