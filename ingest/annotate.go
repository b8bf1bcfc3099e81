package ingest

import (
	"bufio"
	"context"
	"encoding/json"
	"io"
	"math"
	"os"
	"sort"
	"strings"
	"time"

	"bitsift/companion"
	"bitsift/model"
	"bitsift/parse"
)

// Observer sees what becomes of every line an Ingester takes: Line in
// input order as each line is taken, then, possibly later (the detection
// sample's records are committed after the whole sample is parsed),
// exactly one of Record, Rejected or Part for it. rec is valid only during
// the call.
type Observer interface {
	Line(num int64, source string)
	Record(rec *parse.Record, num int64, source string, t int64)
	Rejected(num int64, source, reason string)
	Part(num int64, source string)
}

func (in *Ingester) observeLine(num int64, source string) {
	if in.cfg.Observer != nil {
		in.cfg.Observer.Line(num, source)
	}
}

// Annotation is what annotate writes for one input line.
type Annotation struct {
	File      string                  `json:"file"`
	Line      int64                   `json:"line"`
	Time      *time.Time              `json:"time,omitempty"`
	Fields    map[string]string       `json:"fields,omitempty"`
	Templates map[string]TemplateNote `json:"templates,omitempty"`
	Bits      *float64                `json:"bits,omitempty"`
	Because   []Because               `json:"because,omitempty"`
	Rejected  string                  `json:"rejected,omitempty"`
	Part      bool                    `json:"part,omitempty"`
}

// TemplateNote is a free-text field's template: its group's id, stable for
// the run, and the group's final text.
type TemplateNote struct {
	ID   int    `json:"id"`
	Text string `json:"text"`
}

// Because is one field's share of a record's surprisal.
type Because struct {
	Field string  `json:"field"`
	Bits  float64 `json:"bits"`
}

// Annotate reads paths ("-" is standard input, spooled to a temporary
// file first) three times: first as a report does, to learn the formats,
// the companions and the final template groups (the ids it gives are
// recorded); then, replaying those ids, to count each field's values and
// each field's values given its parent in the pricing forest
// (model.Snapshot.SurpriseForest) over the whole input; then
// to write one JSON object per input line, in input order, to w.
//
// A record's bits are its surprisal against the whole input, as the
// report prices surprising records without a baseline: the sum over its
// informative fields (not identifiers, constants or the timestamp) of
// −log2 p(value | the value of the field's parent in the forest of
// model.Snapshot.SurpriseForest), or −log2 p(value) for a root.
func Annotate(ctx context.Context, cfg Config, paths []string, w io.Writer) (*model.Snapshot, error) {
	paths, cleanup, err := spoolStdin(cfg, paths)
	if err != nil {
		return nil, err
	}
	defer cleanup()
	cfg.Model.Window = model.Window{}
	first, err := New(cfg)
	if err != nil {
		return nil, err
	}
	rec := &companion.Recording{}
	first.recordTemplates = rec
	ferr := first.ReadFiles(ctx, paths)
	if ctx.Err() != nil {
		return nil, ctx.Err()
	}
	snap := first.Snapshot(model.SnapshotOptions{})
	prices := newPricer(snap)
	// Second reading: counts.
	if err := rerun(ctx, cfg, paths, rec, prices); err != nil {
		return nil, err
	}
	prices.finish()
	// Third: the annotations.
	bw := bufio.NewWriterSize(w, 1<<16)
	out := &annotator{enc: json.NewEncoder(bw), first: first, prices: prices, results: map[lineKey]*Annotation{}}
	if err := rerun(ctx, cfg, paths, rec, out); err != nil {
		return nil, err
	}
	out.drain(true)
	if out.err != nil {
		return nil, out.err
	}
	if err := bw.Flush(); err != nil {
		return nil, err
	}
	return snap, ferr
}

func rerun(ctx context.Context, cfg Config, paths []string, rec *companion.Recording, obs Observer) error {
	cfg.Observer = obs
	in, err := New(cfg)
	if err != nil {
		return err
	}
	in.replayTemplates = rec
	in.ReadFiles(ctx, paths) // faults were reported by the first reading
	return ctx.Err()
}

// spoolStdin copies standard input, if it is among paths, to a temporary
// file, so that it can be read more than once.
func spoolStdin(cfg Config, paths []string) ([]string, func(), error) {
	out := append([]string(nil), paths...)
	var tmp string
	for i, p := range paths {
		if p != "-" {
			continue
		}
		if tmp == "" {
			f, err := os.CreateTemp("", "bitsift-annotate-*")
			if err != nil {
				return nil, nil, err
			}
			tmp = f.Name()
			src := cfg.Stdin
			if src == nil {
				src = os.Stdin
			}
			_, err = io.Copy(f, src)
			if cerr := f.Close(); err == nil {
				err = cerr
			}
			if err != nil {
				os.Remove(tmp)
				return nil, nil, err
			}
		}
		out[i] = tmp
	}
	return out, func() {
		if tmp != "" {
			os.Remove(tmp)
		}
	}, nil
}

type lineKey struct {
	source string
	num    int64
}

// annotator writes the annotations in input order: Line queues each line,
// the other calls fill its result, and results go out from the queue's
// front as soon as they are there.
type annotator struct {
	enc     *json.Encoder
	first   *Ingester
	prices  *pricer
	queue   []lineKey
	head    int
	results map[lineKey]*Annotation
	err     error
}

func (a *annotator) Line(num int64, source string) {
	a.queue = append(a.queue, lineKey{source, num})
}

func (a *annotator) Record(rec *parse.Record, num int64, source string, t int64) {
	an := &Annotation{Fields: make(map[string]string, rec.Len())}
	for i := 0; i < rec.Len(); i++ {
		k := string(rec.Key(i))
		if _, dup := an.Fields[k]; !dup {
			an.Fields[k] = string(rec.Value(i))
		}
	}
	for _, c := range a.first.Companions() {
		if !strings.HasSuffix(c.Name(), companion.TemplateSuffix) {
			continue
		}
		v, ok := an.Fields[c.Name()]
		if !ok {
			continue
		}
		if an.Templates == nil {
			an.Templates = map[string]TemplateNote{}
		}
		note := TemplateNote{Text: v}
		if id, ok := companion.ParseID(v); ok {
			note.ID = id
			note.Text, _ = a.first.TemplateText(c.Name(), v)
		}
		an.Templates[c.Source()] = note
	}
	if tk := a.first.TimeKey(); tk != "" {
		if _, ok := an.Fields[tk]; ok {
			at := time.Unix(0, t).UTC()
			an.Time = &at
		}
	}
	bits, because := a.prices.price(an.Fields)
	an.Bits, an.Because = &bits, because
	a.put(source, num, an)
}

func (a *annotator) Rejected(num int64, source, reason string) {
	a.put(source, num, &Annotation{Rejected: reason})
}

func (a *annotator) Part(num int64, source string) {
	a.put(source, num, &Annotation{Part: true})
}

func (a *annotator) put(source string, num int64, an *Annotation) {
	an.File, an.Line = source, num
	k := lineKey{source, num}
	if prev, ok := a.results[k]; ok && prev.Part {
		// A joined record's last part is the record itself.
		a.results[k] = an
	} else if !ok {
		a.results[k] = an
	}
	a.drain(false)
}

// drain writes the results at the queue's front; at the end, every result
// left (none, unless a record closed late) in queue order.
func (a *annotator) drain(end bool) {
	for a.head < len(a.queue) {
		k := a.queue[a.head]
		an, ok := a.results[k]
		if !ok {
			if !end {
				break
			}
			an = &Annotation{File: k.source, Line: k.num, Rejected: "no outcome recorded"}
		}
		delete(a.results, k)
		a.head++
		if a.err == nil {
			if an.File != "" && strings.HasPrefix(an.File, os.TempDir()) && strings.Contains(an.File, "bitsift-annotate-") {
				an.File = "-"
			}
			a.err = a.enc.Encode(an)
		}
	}
	if end && len(a.results) > 0 {
		// A record closed at the end of its source from parts already
		// written (a CRI partial line with no final part): after them.
		left := make([]*Annotation, 0, len(a.results))
		for _, an := range a.results {
			left = append(left, an)
		}
		sort.Slice(left, func(i, j int) bool {
			return left[i].File < left[j].File || left[i].File == left[j].File && left[i].Line < left[j].Line
		})
		for _, an := range left {
			if a.err == nil {
				a.err = a.enc.Encode(an)
			}
		}
		clear(a.results)
	}
	if a.head > 4096 && a.head*2 > len(a.queue) {
		a.queue = append(a.queue[:0], a.queue[a.head:]...)
		a.head = 0
	}
}

// pricer counts, over the whole input, each priced field's values and its
// values given its parent in the pricing forest, then prices records by
// them.
type pricer struct {
	fields []pricedField
	n      float64
	done   bool
}

type pricedField struct {
	name, given string
	count       map[string]float64
	givenCount  map[string]float64
	pair        map[[2]string]float64
	mean        float64 // H(F|G), or H(F): the mean of cost over the input
}

const absentValue = "\x00absent"

func newPricer(s *model.Snapshot) *pricer {
	p := &pricer{}
	tk := s.Input.TimeField
	// The stream's time field is not priced (no model Kind says
	// "timestamp": the field is marked by FieldStats.Timestamp).
	priced := func(i int) bool { return s.Fields[i].Name != tk && !s.Fields[i].Timestamp }
	parent := s.SurpriseForest(priced)
	for i, f := range s.Fields {
		if f.Kind == model.Identifier || f.Kind == model.Constant || !priced(i) {
			continue
		}
		pf := pricedField{name: f.Name, count: map[string]float64{}}
		if g := parent[i]; g >= 0 {
			pf.given = s.Fields[g].Name
			pf.givenCount = map[string]float64{}
			pf.pair = map[[2]string]float64{}
		}
		p.fields = append(p.fields, pf)
	}
	return p
}

func valueOf(fields map[string]string, k string) string {
	if v, ok := fields[k]; ok {
		return v
	}
	return absentValue
}

func (p *pricer) Line(int64, string)             {}
func (p *pricer) Rejected(int64, string, string) {}
func (p *pricer) Part(int64, string)             {}

func (p *pricer) Record(rec *parse.Record, _ int64, _ string, _ int64) {
	fields := make(map[string]string, rec.Len())
	for i := 0; i < rec.Len(); i++ {
		k := string(rec.Key(i))
		if _, dup := fields[k]; !dup {
			fields[k] = string(rec.Value(i))
		}
	}
	p.n++
	for i := range p.fields {
		f := &p.fields[i]
		v := valueOf(fields, f.name)
		f.count[v]++
		if f.given != "" {
			g := valueOf(fields, f.given)
			f.givenCount[g]++
			f.pair[[2]string{g, v}]++
		}
	}
}

// finish computes each field's mean surprisal, for "because".
func (p *pricer) finish() {
	p.done = true
	if p.n == 0 {
		return
	}
	for i := range p.fields {
		f := &p.fields[i]
		if f.given != "" {
			for gv, n := range f.pair {
				f.mean -= n / p.n * math.Log2(n/f.givenCount[gv[0]])
			}
			continue
		}
		for _, n := range f.count {
			f.mean -= n / p.n * math.Log2(n/p.n)
		}
	}
}

// cost is field f's surprisal for the record's values.
func (p *pricer) cost(f *pricedField, fields map[string]string) float64 {
	v := valueOf(fields, f.name)
	if f.given != "" {
		g := valueOf(fields, f.given)
		if n := f.pair[[2]string{g, v}]; n > 0 && f.givenCount[g] > 0 {
			return -math.Log2(n / f.givenCount[g])
		}
	}
	if n := f.count[v]; n > 0 && p.n > 0 {
		return -math.Log2(n / p.n)
	}
	return 0
}

func (p *pricer) price(fields map[string]string) (float64, []Because) {
	total := 0.0
	var because []Because
	for i := range p.fields {
		f := &p.fields[i]
		c := p.cost(f, fields)
		total += c
		if c-f.mean >= 1 {
			because = append(because, Because{Field: f.name, Bits: round3(c)})
		}
	}
	sort.Slice(because, func(i, j int) bool { return because[i].Bits > because[j].Bits })
	if len(because) > 3 {
		because = because[:3]
	}
	return round3(total), because
}

func round3(x float64) float64 { return math.Round(x*1000) / 1000 }
