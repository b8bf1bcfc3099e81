package companion

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"
	"strings"
	"testing"

	"bitsift/model"
	"bitsift/parse"
)

func TestBucketLabels(t *testing.T) {
	// Edges 1, 1.8, 3.2, 5.6 per decade: 10^(k/4) = 1, 1.778, 3.162, 5.623
	// rounded to two digits (arithmetic by hand).
	cases := []struct{ in, want string }{
		{"1", "[1,1.8)"}, {"1.79", "[1,1.8)"}, {"1.8", "[1.8,3.2)"}, {"180", "[180,320)"},
		{"1.8e2", "[180,320)"}, {"180.000", "[180,320)"}, {"319.99", "[180,320)"}, {"999", "[560,1000)"},
		{"1000", "[1000,1800)"}, {"0.0056", "[0.0056,0.01)"}, {"0.18", "[0.18,0.32)"},
		{"-250", "(-320,-180]"}, {"0", "0"}, {"-0.0", "0"}, {"-", "-"}, {"12ms", "NaN"},
		{"3.2e9", "[3.2e+09,5.6e+09)"}, {"+7", "[5.6,10)"},
	}
	var b Buckets
	for _, c := range cases {
		t.Run(c.in, func(t *testing.T) {
			if got := b.label([]byte(c.in)); got != c.want {
				t.Errorf("label(%s) = %s, want %s", c.in, got, c.want)
			}
		})
	}
}

// parseNumber against the standard library's strconv.ParseFloat, the
// reference for reading decimals.
func TestParseNumber(t *testing.T) {
	for _, s := range []string{"0", "1", "-1", "3.25", "0.0001", "123456789012345678901234", "1e3", "1E-3",
		"-2.5e+10", ".5", "5.", "007", "1.8", "0.18", "99.999"} {
		want, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatal(err)
		}
		got, ok := parseNumber([]byte(s))
		if !ok || math.Abs(got-want) > 1e-15*math.Abs(want) {
			t.Errorf("parseNumber(%s) = %v, %v; strconv: %v", s, got, ok, want)
		}
	}
	for _, s := range []string{"", "-", "+", ".", "e5", "1e", "0x10", "NaN", "Inf", "1.2.3", "12ms", "1 2"} {
		if _, ok := parseNumber([]byte(s)); ok {
			t.Errorf("parseNumber(%q) accepted", s)
		}
	}
}

func TestMask(t *testing.T) {
	cases := []struct{ in, want string }{
		{"valve 3 open for 40s", "valve <num> open for <num>s"},
		{"probe 10.4.0.9:8125 sent 1,024 bytes", "probe <ip> sent <num> bytes"},
		{"peer fe80::1 dropped", "peer <ip> dropped"},
		{"at 12:30:05 sharp", "at <num>:<num>:<num> sharp"},
		{"reading 5f0c2a9e-77b1-4c3e-9d2a-0123456789ab stored", "reading <uuid> stored"},
		{"crc 0x1F3a mismatch in deadbeef42", "crc <hex> mismatch in <hex>"},
		{"wrote /var/lib/gh/zone-b.csv (ok)", "wrote <path> (ok)"},
		{`zone "north bay" is dry`, "zone <str> is dry"},
		{`label='north bay', rh=71`, "label=<str>, rh=<num>"},
		{"see https://example.org/x?a=1 now", "see <url> now"},
		{"It's dry", "It's dry"},
		{"sensor[12]: ok.", "sensor[<num>]: ok."},
	}
	tp := newTemplater()
	for _, c := range cases {
		t.Run(c.in, func(t *testing.T) {
			tp.mask([]byte(c.in))
			if got := string(tp.masked()); got != c.want {
				t.Errorf("mask(%q) = %q, want %q", c.in, got, c.want)
			}
		})
	}
}

func TestTemplateMerge(t *testing.T) {
	tp := newTemplater()
	steps := []struct{ in, want string }{
		{"mister on in zone north by ops", "mister on in zone north by ops"},
		{"mister on in zone south by ops", "mister on in zone <*> by ops"},
		{"mister on in zone east by ops", "mister on in zone <*> by ops"},
		{"fan 3 stalled", "fan <num> stalled"},
		// Under the similarity threshold: a template of its own.
		{"mister off after rain alarm from ops", "mister off after rain alarm from ops"},
	}
	for _, s := range steps {
		if got := string(tp.template([]byte(s.in))); got != s.want {
			t.Errorf("template(%q) = %q, want %q", s.in, got, s.want)
		}
	}
	if len(tp.groups) != 3 {
		t.Errorf("%d groups, want 3", len(tp.groups))
	}
}

func TestTemplateCap(t *testing.T) {
	tp := newTemplater()
	for i := 0; i < 3*maxTemplates; i++ {
		// Every message of a new length starts a group of its own.
		msg := make([]byte, 0, 2*(i%200+1))
		for w := 0; w <= i%200; w++ {
			msg = append(msg, "ab"[i/200%2], ' ')
		}
		msg = append(msg, strconv.Itoa(i/400)...)
		msg = append(msg, 'x')
		tp.template(msg)
	}
	if len(tp.groups) > maxTemplates {
		t.Errorf("%d groups, cap %d", len(tp.groups), maxTemplates)
	}
}

func BenchmarkTemplate(b *testing.B) {
	msgs := [][]byte{
		[]byte("Failed password for invalid user gnome from 10.4.0.9 port 52231 ssh2"),
		[]byte("mister on in zone north by ops after 40s"),
		[]byte(`pam_unix(sshd:session): session opened for user kim by (uid=0)`),
		[]byte("Received disconnect from 10.4.0.12 port 40022:11: Bye Bye [preauth]"),
	}
	tp := newTemplater()
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		tp.template(msgs[i%len(msgs)])
	}
}

// Host:port-like words do not branch the tree once masked: one event with
// many relays is one group, not one per relay (the 340 templates
// for 8 events). Short messages that differ in their one telling word stay
// apart; a longer one with one varying plain word merges.
func TestTemplateVariableWordsAndLength(t *testing.T) {
	tp := NewTemplates("msg")
	for i := 0; i < 300; i++ {
		tp.Value([]byte(fmt.Sprintf("relay%d.quay.example:%d open through proxy 10.0.%d.1:8080 HTTPS", i%40, 400+i%7, i%9)))
		tp.Value([]byte(fmt.Sprintf("db%02d.berths.internal:5432 open through proxy 10.0.%d.1:8080 HTTPS", i%30, i%9)))
	}
	if tp.Groups() != 1 {
		t.Errorf("%d groups for one event: %v", tp.Groups(), groupTexts(tp))
	}
	short := NewTemplates("msg")
	for _, m := range []string{"gate opened", "gate closed", "crane 4 stopped", "crane 7 started"} {
		short.Value([]byte(m))
	}
	if short.Groups() != 4 {
		t.Errorf("short messages merged: %v", groupTexts(short))
	}
	long := NewTemplates("msg")
	for _, u := range []string{"ops", "pilot", "warden"} {
		long.Value([]byte("session opened for user " + u + " by (uid=0)"))
	}
	if long.Groups() != 1 {
		t.Errorf("one varying word split a long message: %v", groupTexts(long))
	}
}

func groupTexts(t *Templates) []string {
	var out []string
	for id := 1; id <= t.Groups(); id++ {
		s, _ := t.Text(id)
		out = append(out, s)
	}
	return out
}

// TestModelKnowsCompanionSuffixes: model.ParseCond reads a ~ followed by
// one of model.CompanionSuffixes as part of a field's name; they must be
// the names this package makes.
func TestModelKnowsCompanionSuffixes(t *testing.T) {
	want := []string{BucketSuffix, TemplateSuffix}
	if !slices.Equal(model.CompanionSuffixes, want) {
		t.Fatalf("model.CompanionSuffixes = %q, companions are named with %q", model.CompanionSuffixes, want)
	}
}

// TestBucketsValueMatchesLabel: the labels Value gives, remembered or not,
// are label's, for values of every length (short ones remembered as two
// words), repeated, and past the memo's capacity.
func TestBucketsValueMatchesLabel(t *testing.T) {
	r := rand.New(rand.NewPCG(11, 12))
	var vals []string
	for i := 0; i < 3*memoMax; i++ {
		var v string
		switch r.IntN(6) {
		case 0:
			v = strconv.Itoa(r.IntN(100000))
		case 1:
			v = strconv.FormatFloat(r.Float64()*1000, 'f', r.IntN(8), 64)
		case 2:
			v = strconv.FormatFloat(-r.ExpFloat64()*1e6, 'e', r.IntN(12), 64)
		case 3:
			v = []string{"-", "", "NaN", "12ms", "+7", "5.", "0.0", "1e308", "1e-320"}[r.IntN(9)]
		case 4:
			v = strconv.FormatFloat(r.Float64(), 'f', 10+r.IntN(12), 64) // past 16 bytes
		default:
			if len(vals) > 0 {
				v = vals[r.IntN(len(vals))] // seen before
			}
		}
		vals = append(vals, v)
	}
	// Values that share their first word and length, not their bucket:
	// each must be told from the other by its second word.
	pairs := []string{"12345678e3", "1234567800", "10000", "1000e", "1.5e3", "1.5e7", "0.0000001", "0.0000009e9"}
	vals = append(append(pairs, vals...), pairs...)
	var b, ref Buckets
	for _, v := range vals {
		if got, want := string(b.Value([]byte(v))), ref.label([]byte(v)); got != want {
			t.Fatalf("Value(%q) = %q, label %q", v, got, want)
		}
	}
	if b.short.used != memoMax {
		t.Errorf("%d short values remembered, want the cap %d: the test no longer fills it", b.short.used, memoMax)
	}
}

// TestShortMemoCollisions: in a table of 16 slots holding 13 values that
// share their length and first word, probes pass over one another's
// slots, and each value is still told by its second word.
func TestShortMemoCollisions(t *testing.T) {
	var ref Buckets
	m := shortMemo{slots: make([]memoSlot, 16)}
	var vals []string
	for e := range 10 {
		vals = append(vals, "12345678e"+strconv.Itoa(e))
	}
	vals = append(vals, "1234567800", "1234567.99", "12345678.9")
	for round := 0; round < 2; round++ {
		for _, v := range vals {
			if got, want := m.get([]byte(v), ref.label), ref.label([]byte(v)); got != want {
				t.Fatalf("round %d: %q gave %q, want %q", round, v, got, want)
			}
		}
	}
}

// TestNoTemplateForInnerTimes: an inner line's own time, renamed log.time
// beside the outer line's (a klog line in a CRI file), gets no template,
// as a time field of the usual names does not; a message beside it does.
func TestNoTemplateForInnerTimes(t *testing.T) {
	var sample []*parse.Record
	for i := 0; i < 200; i++ {
		rec := &parse.Record{}
		rec.AddString("time", fmt.Sprintf("2026-03-14T02:11:%02d.%06dZ", i%60, i))
		rec.AddString("log.time", fmt.Sprintf("0314 02:11:%02d.%06d", i%60, i))
		rec.AddString("note", fmt.Sprintf("berth %d reconciled in %d ms", i%13, i%40))
		sample = append(sample, rec)
	}
	s := Choose(sample, Options{})
	var names []string
	for _, c := range s.List() {
		names = append(names, c.Name())
	}
	if got := strings.Join(names, ","); got != "note"+TemplateSuffix {
		t.Errorf("companions %s, want note%s only", got, TemplateSuffix)
	}
}

// TestNoBucketsForEpochs: numbers that are times since 1970 in seconds,
// milliseconds, microseconds (a systemd journal's) or nanoseconds get no
// log buckets, whatever their field's name; a latency does.
func TestNoBucketsForEpochs(t *testing.T) {
	units := map[string]int64{"s": 1, "ms": 1e3, "us": 1e6, "ns": 1e9}
	var sample []*parse.Record
	for i := int64(0); i < 300; i++ {
		rec := &parse.Record{}
		for name, u := range units {
			rec.AddString("created_"+name, strconv.FormatInt((1773454269+i*37)*u+i%u, 10))
		}
		rec.AddString("latency_ms", strconv.FormatInt(3+i*i%977, 10))
		sample = append(sample, rec)
	}
	var names []string
	for _, c := range Choose(sample, Options{}).List() {
		names = append(names, c.Name())
	}
	if got := strings.Join(names, ","); got != "latency_ms"+BucketSuffix {
		t.Errorf("companions %s, want latency_ms%s only", got, BucketSuffix)
	}
}
