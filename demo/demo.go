// Package demo generates the built-in demo stream: JSON access logs of an
// invented service, "quayside", the booking API of a made-up ferry operator.
// Its fields have known relations, so the stream doubles as a test fixture:
//
//   - svc is constant;
//   - req_id is a unique identifier;
//   - zone follows from host, and region from zone (a chain);
//   - method follows from route;
//   - level follows from status;
//   - upstream follows from route, until the incident;
//   - latency_ms is numeric with many distinct values;
//   - account has a few thousand values with a skewed (Zipf) spread;
//   - refund_reason is rare (on some cancellations only).
//
// The scripted incident: for records [IncidentStart, IncidentEnd), a bad
// deploy on hosts qs-api-07 and qs-api-08 sends the calls meant for the
// harbormaster upstream to ledger instead (the rule "route determines
// upstream" breaks), and /v1/berths calls everywhere fail with 503 far more
// often and run four times slower (the status and latency distributions
// shift).
package demo

import (
	"math"
	"math/rand/v2"
	"strconv"
	"time"
)

// Incident bounds for an endless stream (and for Lines = 200,000): at the
// demo's live pace of 2,000 lines/s it begins 35 s in and lasts 15 s.
const (
	IncidentStart = 70_000
	IncidentEnd   = 100_000
)

// BadHosts are the hosts whose deploy misroutes calls during the incident.
var BadHosts = []string{"qs-api-07", "qs-api-08"}

// Start is the time of the first record of the stream.
var Start = time.Date(2026, 3, 14, 6, 0, 0, 0, time.UTC)

// Spacing is the record-time gap between two records: 2,000 records/s.
const Spacing = 500 * time.Microsecond

type route struct {
	path, method, upstream string
	weight                 float64
	okBytes                int
}

var routes = []route{
	{"/v1/sailings", "GET", "schedule", 30, 5200},
	{"/v1/sailings/:id", "GET", "schedule", 22, 1400},
	{"/v1/tickets", "POST", "ledger", 12, 900},
	{"/v1/tickets/:id", "GET", "ledger", 14, 700},
	{"/v1/tickets/:id/cancel", "POST", "ledger", 3, 300},
	{"/v1/berths", "GET", "harbormaster", 10, 2600},
	{"/v1/manifests/:id", "PUT", "harbormaster", 4, 400},
	{"/healthz", "GET", "local", 5, 20},
}

var hosts = []struct{ name, zone string }{
	{"qs-api-01", "pier-north"}, {"qs-api-02", "pier-north"}, {"qs-api-03", "pier-north"},
	{"qs-api-04", "pier-north"}, {"qs-api-05", "pier-south"}, {"qs-api-06", "pier-south"},
	{"qs-api-07", "pier-south"}, {"qs-api-08", "pier-south"}, {"qs-api-09", "dry-dock"},
	{"qs-api-10", "dry-dock"}, {"qs-api-11", "dry-dock"}, {"qs-api-12", "dry-dock"},
}

var regions = map[string]string{"pier-north": "coast-1", "pier-south": "coast-1", "dry-dock": "coast-2"}

var refundReasons = []string{"weather", "schedule_change", "duplicate", "customer_request"}

// Generator produces demo lines deterministically from a seed.
type Generator struct {
	rng      *rand.Rand
	zipf     *rand.Zipf
	i        int64
	cum      []float64
	incStart int64
	incEnd   int64
	// Now, when set, stamps records with the wall clock instead of the
	// synthetic record time (for a live stream).
	Now func() time.Time
}

// New returns a generator of a stream of lines lines (0: endless) whose
// incident sits where the package comment says, scaled for short streams.
func New(seed uint64, lines int64) *Generator {
	src := rand.NewPCG(seed, 0x9e3779b97f4a7c15)
	g := &Generator{rng: rand.New(src), incStart: IncidentStart, incEnd: IncidentEnd}
	g.zipf = rand.NewZipf(g.rng, 1.15, 4, 4999)
	total := 0.0
	for _, r := range routes {
		total += r.weight
		g.cum = append(g.cum, total)
	}
	for i := range g.cum {
		g.cum[i] /= total
	}
	if lines > 0 && lines < 2*IncidentEnd {
		g.incStart, g.incEnd = lines*35/100, lines/2
	}
	return g
}

// Incident returns the record numbers [start, end) of the incident, counted
// from 0.
func (g *Generator) Incident() (start, end int64) { return g.incStart, g.incEnd }

// Append appends the next line (without newline) to dst.
func (g *Generator) Append(dst []byte) []byte {
	i := g.i
	g.i++
	inc := i >= g.incStart && i < g.incEnd
	r := g.rng
	h := hosts[r.IntN(len(hosts))]
	x := r.Float64()
	ri := 0
	for ri < len(g.cum)-1 && x > g.cum[ri] {
		ri++
	}
	rt := routes[ri]
	upstream := rt.upstream
	if inc && upstream == "harbormaster" && (h.name == BadHosts[0] || h.name == BadHosts[1]) {
		upstream = "ledger"
	}
	// Status: mostly 200, some client errors, a few server errors.
	status := 200
	switch y := r.Float64(); {
	case rt.method == "POST" && y < 0.25:
		status = 201
	case y < 0.03:
		status = 404
	case y < 0.045:
		status = 400
	case y < 0.05:
		status = 500
	}
	if inc && rt.path == "/v1/berths" && r.Float64() < 0.4 {
		status = 503
	}
	level := "info"
	switch {
	case status >= 500:
		level = "error"
	case status >= 400:
		level = "warn"
	}
	lat := math.Exp(r.NormFloat64()*0.6+3.2) * latencyScale(rt.upstream)
	if inc && rt.path == "/v1/berths" {
		lat *= 4
	}
	t := Start.Add(time.Duration(i) * Spacing)
	if g.Now != nil {
		t = g.Now()
	}
	dst = append(dst, `{"ts":"`...)
	dst = t.UTC().AppendFormat(dst, "2006-01-02T15:04:05.000000Z07:00")
	dst = append(dst, `","level":"`...)
	dst = append(dst, level...)
	dst = append(dst, `","svc":"quayside","host":"`...)
	dst = append(dst, h.name...)
	dst = append(dst, `","zone":"`...)
	dst = append(dst, h.zone...)
	dst = append(dst, `","region":"`...)
	dst = append(dst, regions[h.zone]...)
	dst = append(dst, `","method":"`...)
	dst = append(dst, rt.method...)
	dst = append(dst, `","route":"`...)
	dst = append(dst, rt.path...)
	dst = append(dst, `","status":`...)
	dst = strconv.AppendInt(dst, int64(status), 10)
	dst = append(dst, `,"upstream":"`...)
	dst = append(dst, upstream...)
	dst = append(dst, `","latency_ms":`...)
	dst = strconv.AppendFloat(dst, math.Round(lat*10)/10, 'f', 1, 64)
	dst = append(dst, `,"req_id":"`...)
	dst = appendHex(dst, r.Uint64())
	dst = append(dst, `","account":"acct-`...)
	dst = strconv.AppendUint(dst, g.zipf.Uint64()+1000, 10)
	dst = append(dst, '"')
	if rt.path == "/v1/tickets/:id/cancel" && r.Float64() < 0.3 {
		dst = append(dst, `,"refund_reason":"`...)
		dst = append(dst, refundReasons[r.IntN(len(refundReasons))]...)
		dst = append(dst, '"')
	}
	return append(dst, '}')
}

func latencyScale(upstream string) float64 {
	switch upstream {
	case "ledger":
		return 1.6
	case "harbormaster":
		return 1.2
	case "local":
		return 0.05
	}
	return 1
}

func appendHex(dst []byte, v uint64) []byte {
	const digits = "0123456789abcdef"
	for s := 60; s >= 0; s -= 4 {
		dst = append(dst, digits[v>>uint(s)&0xf])
	}
	return dst
}
