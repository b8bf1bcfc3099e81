package companion

import (
	"fmt"
	"math/rand"
	"strings"
	"testing"

	"bitsift/parse"
)

// The Labeller and Resolve against Apply, the sequential path they stand
// in for: on the same records (messages of many shapes, enough to pass the
// template cap, numbers, fields that come and go), every record gets the
// same fields in the same order, every group the same text, and a
// recording the same ids; replaying the recording gives the same records
// again.
func TestLabellerMatchesApply(t *testing.T) {
	recs := labellerRecords(30000)
	sample := make([]*parse.Record, 200)
	for i := range sample {
		sample[i] = recs[i]
	}
	opt := Options{Templates: []string{"note"}}
	seq, par := Choose(sample, opt), Choose(sample, opt)
	if seq.Len() < 3 {
		t.Fatalf("companions %v: the test wants buckets and templates", names(seq))
	}
	recSeq, recPar := &Recording{}, &Recording{}
	seq.Record(recSeq)
	par.Record(recPar)
	run(t, "first reading", seq, par, recs)
	for _, c := range seq.List() {
		tp, ok := c.(*Templates)
		if !ok {
			continue
		}
		tq, _ := par.Templates(tp.Name())
		if tp.Groups() != tq.Groups() {
			t.Fatalf("%s: %d groups, %d through the Labeller", tp.Name(), tp.Groups(), tq.Groups())
		}
		for id := 1; id <= tp.Groups(); id++ {
			a, _ := tp.Text(id)
			b, _ := tq.Text(id)
			if a != b {
				t.Fatalf("%s group %d: %q, %q through the Labeller", tp.Name(), id, a, b)
			}
		}
		if tp.Name() == "msg~template" && tp.Groups() < maxTemplates {
			t.Errorf("%d msg groups: the test wants the cap passed", tp.Groups())
		}
		if fmt.Sprint(recSeq.ids[tp.Name()]) != fmt.Sprint(recPar.ids[tp.Name()]) {
			t.Fatalf("%s: the recordings differ", tp.Name())
		}
	}
	seq2, par2 := Choose(sample, opt), Choose(sample, opt)
	seq2.Replay(recSeq)
	par2.Replay(recSeq)
	run(t, "replay", seq2, par2, recs)
}

func run(t *testing.T, what string, seq, par *Set, recs []*parse.Record) {
	t.Helper()
	lab := par.Labeller()
	if lab == nil {
		t.Fatal("no Labeller")
	}
	var a, b parse.Record
	for n, rec := range recs {
		a.CopyFrom(rec)
		b.CopyFrom(rec)
		seq.Apply(&a)
		from := b.Len()
		lab.Apply(&b)
		par.Resolve(&b, from)
		if got, want := fields(&b), fields(&a); got != want {
			t.Fatalf("%s, record %d:\n Labeller %s\n Apply    %s", what, n, got, want)
		}
	}
}

func fields(r *parse.Record) string {
	var b strings.Builder
	for i := 0; i < r.Len(); i++ {
		fmt.Fprintf(&b, "%q=%q ", r.Key(i), r.Value(i))
	}
	return b.String()
}

func names(s *Set) []string {
	var out []string
	for _, c := range s.List() {
		out = append(out, c.Name())
	}
	return out
}

// labellerRecords makes n records of an invented crane yard: a message of
// 1 to 70 words (plain words, numbers, addresses, quoted text, tabs), a
// latency, a note that is sometimes missing, and a level.
func labellerRecords(n int) []*parse.Record {
	rng := rand.New(rand.NewSource(7))
	words := make([]string, 400)
	for i := range words {
		words[i] = fmt.Sprintf("w%c%c%c", 'a'+rng.Intn(26), 'a'+rng.Intn(26), 'a'+rng.Intn(26))
	}
	word := func() string {
		switch rng.Intn(12) {
		case 0:
			return fmt.Sprint(rng.Intn(100000))
		case 1:
			return fmt.Sprintf("10.%d.%d.%d:%d", rng.Intn(4), rng.Intn(9), rng.Intn(250), 1000+rng.Intn(9))
		case 2:
			return fmt.Sprintf(`"%s %s"`, words[rng.Intn(20)], words[rng.Intn(20)])
		case 3:
			return fmt.Sprintf("key=%s,", words[rng.Intn(5)])
		default:
			return words[rng.Intn(len(words))]
		}
	}
	out := make([]*parse.Record, n)
	for i := range out {
		k := 1 + rng.Intn(8)
		if rng.Intn(50) == 0 {
			k = 60 + rng.Intn(10)
		}
		ws := make([]string, k)
		for j := range ws {
			ws[j] = word()
		}
		sep := " "
		if rng.Intn(10) == 0 {
			sep = " \t"
		}
		rec := &parse.Record{}
		rec.AddString("msg", strings.Join(ws, sep))
		rec.AddString("latency", fmt.Sprintf("%.1f", rng.ExpFloat64()*40))
		if rng.Intn(3) > 0 {
			rec.AddString("note", words[rng.Intn(30)]+" "+fmt.Sprint(rng.Intn(9)))
		}
		rec.AddString("level", []string{"info", "warn", "error"}[rng.Intn(3)])
		out[i] = rec
	}
	return out
}
