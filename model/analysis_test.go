package model

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat"

	"bitsift/demo"
	"bitsift/parse"
)

// TestJensenShannon: SciPy 1.x scipy.spatial.distance.jensenshannon(
// [1,0],[0.5,0.5]) = 0.46450140402245893, the square root of the divergence
// 0.21576155433883565 nats; and gonum stat.JensenShannon (v0.17.0), which
// gives the divergence in nats, on random vectors.
func TestJensenShannon(t *testing.T) {
	d := JensenShannon([]float64{1, 0}, []float64{0.5, 0.5})
	near(t, "JSD nats", d*math.Ln2, 0.21576155433883565, 1e-12)
	near(t, "SciPy distance", math.Sqrt(d*math.Ln2), 0.46450140402245893, 1e-12)
	r := rand.New(rand.NewPCG(3, 3))
	for trial := 0; trial < 50; trial++ {
		k := 2 + r.IntN(20)
		p, q := make([]float64, k), make([]float64, k)
		sp, sq := 0.0, 0.0
		for i := range p {
			p[i], q[i] = r.Float64(), r.Float64()
			sp += p[i]
			sq += q[i]
		}
		for i := range p {
			p[i] /= sp
			q[i] /= sq
		}
		near(t, fmt.Sprintf("trial %d", trial), JensenShannon(p, q)*math.Ln2, stat.JensenShannon(p, q), 1e-12)
	}
}

// ruleRows builds records where route determines upstream, with a rare
// account value now and then.
func ruleRows(n int, rng *rand.Rand) [][]string {
	routes := []string{"/a", "/b", "/c", "/d"}
	ups := map[string]string{"/a": "alpha", "/b": "beta", "/c": "alpha", "/d": "gamma"}
	var rows [][]string
	for i := 0; i < n; i++ {
		rt := routes[rng.IntN(len(routes))]
		acct := fmt.Sprint("acct-", rng.IntN(8))
		rows = append(rows, []string{"route", rt, "upstream", ups[rt], "account", acct})
	}
	return rows
}

// TestBrokenRuleOutranksRare: against a baseline where route determines
// upstream, a record that breaks the rule is reported under broken rules and
// is more surprising than one whose only oddity is a value seen once in the
// baseline.
func TestBrokenRuleOutranksRare(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	baseRows := ruleRows(4000, rng)
	baseRows = append(baseRows, []string{"route", "/a", "upstream", "alpha", "account", "acct-rare"})
	base := build(t, Window{}, baseRows).Profile()
	now := ruleRows(2000, rng)
	now = append(now,
		[]string{"route", "/b", "upstream", "alpha", "account", "acct-1"},   // breaks the rule
		[]string{"route", "/b", "upstream", "beta", "account", "acct-rare"}, // merely rare
	)
	m := build(t, Window{}, now)
	m.SetBaseline(base)
	s := m.Snapshot(SnapshotOptions{Deep: true})
	if len(s.Changes.Broken) != 1 || s.Changes.Broken[0].Target != "upstream" || s.Changes.Broken[0].Given != "route" {
		t.Fatalf("broken %+v, want upstream given route", s.Changes.Broken)
	}
	ex := s.Changes.Broken[0].Examples
	if len(ex) != 1 || ex[0].GivenValue != "/b" || ex[0].TargetValue != "alpha" || ex[0].Expected != "beta" || ex[0].Count != 1 {
		t.Errorf("examples %+v", ex)
	}
	sur := s.Changes.Surprising
	if len(sur) < 2 || sur[0].Line != 2001 {
		t.Fatalf("most surprising %+v, want line 2001 (the rule break) first", sur)
	}
	if sur[0].Because[0].Field != "upstream" || sur[0].Because[0].Broke != "route" {
		t.Errorf("because %+v, want upstream breaking route", sur[0].Because)
	}
	if sur[1].Line != 2002 {
		t.Errorf("second %+v, want the rare record 2002", sur[1])
	}
}

// TestProfileJSONRoundTrip: a profile read back from JSON finds the same
// broken rule.
func TestProfileJSONRoundTrip(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	b, err := json.Marshal(build(t, Window{}, ruleRows(3000, rng)).Profile())
	if err != nil {
		t.Fatal(err)
	}
	var p Profile
	if err := json.Unmarshal(b, &p); err != nil {
		t.Fatal(err)
	}
	rows := ruleRows(1000, rng)
	for i := 0; i < 50; i++ {
		rows = append(rows, []string{"route", "/d", "upstream", "beta", "account", "acct-1"})
	}
	m := build(t, Window{}, rows)
	m.SetBaseline(&p)
	s := m.Snapshot(SnapshotOptions{})
	if len(s.Changes.Broken) != 1 || s.Changes.Broken[0].Violations != 50 {
		t.Errorf("broken %+v, want upstream|route with 50 violations", s.Changes.Broken)
	}
}

// TestRollingBaseline: with a record window, the rolling baseline is a
// profile none of whose records is still in the window.
func TestRollingBaseline(t *testing.T) {
	m := New(Options{Window: Window{Kind: WindowRecords, Records: 500}})
	m.UseRollingBaseline()
	rng := rand.New(rand.NewPCG(7, 8))
	rows := ruleRows(3000, rng)
	for i, r := range rows {
		if i >= 2500 && r[1] == "/a" {
			r[3] = "gamma" // the rule breaks in the last window
		}
		addRow(m, r, i)
	}
	b := m.Baseline()
	if b == nil || b.Source != "rolling" || b.through > m.seen-int64(m.Len()) {
		t.Fatalf("rolling baseline %+v at %d records seen", b, m.seen)
	}
	s := m.Snapshot(SnapshotOptions{})
	if len(s.Changes.Broken) == 0 || s.Changes.Broken[0].Target != "upstream" {
		t.Errorf("broken %+v, want upstream given route", s.Changes.Broken)
	}
	if sh := s.Fields[s.Index("upstream")].Shift; sh == nil || !sh.Flagged {
		t.Errorf("upstream shift %+v, want flagged", sh)
	}
}

// TestDeterminantPairs: F = G1 xor G2 has no single determinant but the
// pair; the pair {F, id-like} is not reported (a near-key), and an
// unrelated field gets nothing.
func TestDeterminantPairs(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 9))
	var rows [][]string
	for i := 0; i < 4000; i++ {
		a, b := rng.IntN(2), rng.IntN(3)
		rows = append(rows, []string{"a", fmt.Sprint(a), "b", fmt.Sprint(b), "f", fmt.Sprint((a + b) % 3),
			"noise", fmt.Sprint(rng.IntN(4)), "fine", fmt.Sprint(rng.IntN(900))})
	}
	s := build(t, Window{}, rows).Snapshot(SnapshotOptions{Deep: true})
	var got []string
	for _, d := range s.Determinants {
		got = append(got, d.Target+"←"+strings.Join(d.Given, "+"))
	}
	found := false
	for _, g := range got {
		found = found || g == "f←a+b"
		if strings.Contains(g, "fine") || strings.HasPrefix(g, "noise") {
			t.Errorf("determinant %s: near-key or unrelated", g)
		}
	}
	if !found {
		t.Errorf("determinants %v, want f←a+b", got)
	}
}

// TestDemoIncident: against a baseline of the demo stream's first 60,000
// lines, the window of its incident (records 70,000–100,000, package demo)
// shows the broken rule upstream|route with the misrouted values, status and
// latency_ms shifted, and incident records from the bad hosts leading the
// surprising records.
func TestDemoIncident(t *testing.T) {
	if testing.Short() {
		t.Skip("reads 160,000 demo lines")
	}
	base := demoModel(t, 60_000, Window{}).Profile()
	m := demoModel(t, 100_000, Window{Kind: WindowRecords, Records: 30_000})
	m.SetBaseline(base)
	s := m.Snapshot(SnapshotOptions{Deep: true})
	var br *BrokenRule
	for i := range s.Changes.Broken {
		if b := &s.Changes.Broken[i]; b.Target == "upstream" && b.Given == "route" {
			br = b
		}
	}
	if br == nil || len(br.Examples) == 0 || br.Examples[0].TargetValue != "ledger" || br.Examples[0].Expected != "harbormaster" {
		t.Fatalf("broken %+v, want upstream|route with harbormaster→ledger", s.Changes.Broken)
	}
	for _, name := range []string{"status", "latency_ms"} {
		if sh := s.Fields[s.Index(name)].Shift; sh == nil || !sh.Flagged {
			t.Errorf("%s shift %+v, want flagged", name, sh)
		}
	}
	for i, r := range s.Changes.Surprising[:5] {
		h := r.Record["host"]
		if r.Line <= demo.IncidentStart || r.Line > demo.IncidentEnd || (h != demo.BadHosts[0] && h != demo.BadHosts[1]) {
			t.Errorf("surprising #%d: line %d host %s, want an incident record of a bad host", i, r.Line, h)
		}
	}
	found := false
	for _, d := range s.Determinants {
		found = found || (d.Target == "upstream" && strings.Join(d.Given, "+") == "route+host")
	}
	if !found {
		t.Errorf("determinants %+v, want upstream←route+host during the incident", s.Determinants)
	}
}

func addRow(m *Model, r []string, i int) {
	var rec parse.Record
	for j := 0; j+1 < len(r); j += 2 {
		rec.AddString(r[j], r[j+1])
	}
	m.Add(&rec, int64(i+1), int64(i))
}
