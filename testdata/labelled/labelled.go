// Package labelled generates labelled logs of an invented harbour: for each
// line shape bitsift reads without flags, lines whose true event (the
// message template that printed them) is known, so that tests can measure
// grouping accuracy (Zhu et al., "Tools and Benchmarks for Automated Log
// Parsing", ICSE-SEIP 2019) and check the parser, the templates and the
// annotate command on them. The logs are deterministic from a seed; the
// files beside this one are Generate(shape, 2000, 1) for every shape
// (TestLabelledFilesCurrent keeps them so).
package labelled

import (
	"fmt"
	"math"
	"math/rand"
	"strings"
	"time"
)

// Shapes are the line shapes, by name.
var Shapes = []string{
	"jvm", "hdfs", "spark", "zookeeper", "android", "healthapp", "proxy",
	"syslog", "ras", "openstack", "cbs", "apache-error",
}

// event is one message template: words with placeholders in braces.
type event struct {
	text      string
	component string
	level     string
}

// pool holds the messages every shape draws its events from; each shape
// takes its own run of 20 to 60 of them. Placeholders: {n} a number, {id}
// a hexadecimal id, {uuid}, {host} a host name with digits, {hostport},
// {ip}, {ipport}, {path}, {q} a quoted string, {size} a size with its unit,
// {ms} a duration, {berth} berth-12 and the like, {user}, {vessel} and
// {method} plain words from small lists (variables no mask can see).
var pool = []event{
	{"berth {n} over capacity ({n} of {n})", "quay.berth.Planner", "WARN"},
	{"posted batch {n} ({n} rows)", "quay.ledger.Posting", "INFO"},
	{"evicted {n} entries from tide cache", "tide.Cache", "INFO"},
	{"resync of berth {n} took {ms}", "quay.berth.Sync", "WARN"},
	{"shore power on at berth {n}", "quay.power.Shore", "INFO"},
	{"shore power off at berth {n} after {ms}", "quay.power.Shore", "INFO"},
	{"gate {n} opened for truck {n}", "quay.gate.Control", "INFO"},
	{"gate {n} closed for truck {n}", "quay.gate.Control", "INFO"},
	{"manifest {id} accepted for vessel {vessel} at {berth}", "quay.manifest.Intake", "INFO"},
	{"manifest {id} rejected: checksum mismatch in {path}", "quay.manifest.Intake", "ERROR"},
	{"crane {n} lifted container {id} weighing {n} kg", "quay.crane.Motion", "INFO"},
	{"crane {n} stopped: wind {n} knots over limit", "quay.crane.Safety", "WARN"},
	{"connection to {hostport} refused", "quay.net.Client", "ERROR"},
	{"connected to {hostport} in {ms}", "quay.net.Client", "INFO"},
	{"open through proxy {ipport} HTTPS", "quay.net.Proxy", "INFO"},
	{"close, {size} sent, {size} received, lifetime {ms}", "quay.net.Proxy", "INFO"},
	{"session opened for user {user} by (uid={n})", "quay.auth.Session", "INFO"},
	{"session closed for user {user}", "quay.auth.Session", "INFO"},
	{"failed password for {user} from {ip} port {n} ssh2", "quay.auth.Login", "WARN"},
	{"accepted key for {user} from {ip} port {n}", "quay.auth.Login", "INFO"},
	{"harbormaster approved departure of {vessel} from {berth}", "quay.harbor.Master", "INFO"},
	{"harbormaster delayed departure of {vessel} by {n} minutes", "quay.harbor.Master", "WARN"},
	{"ledger entry {uuid} written to {path}", "quay.ledger.Store", "DEBUG"},
	{"ledger flush of {size} took {ms}", "quay.ledger.Store", "DEBUG"},
	{"pilot boarded {vessel} at buoy {n}", "quay.pilot.Dispatch", "INFO"},
	{"no pilot free for {vessel}, queue length {n}", "quay.pilot.Dispatch", "WARN"},
	{"tide gauge {n} reads {n} cm", "tide.Gauge", "DEBUG"},
	{"tide gauge {n} silent for {ms}", "tide.Gauge", "ERROR"},
	{"reefer {id} temperature {n} C out of range", "quay.reefer.Monitor", "ERROR"},
	{"reefer {id} plugged in at stack {n}", "quay.reefer.Monitor", "INFO"},
	{"customs hold placed on container {id}: {q}", "quay.customs.Hold", "WARN"},
	{"customs hold released on container {id}", "quay.customs.Hold", "INFO"},
	{"request {uuid} {method} {path} returned {n} in {ms}", "quay.api.Http", "INFO"},
	{"request {uuid} refused: {n} requests in {ms} from {ip}", "quay.api.Http", "WARN"},
	{"slow query on berth table took {ms}", "quay.db.Pool", "WARN"},
	{"pool exhausted: {n} of {n} connections busy", "quay.db.Pool", "ERROR"},
	{"replica {host} lag {ms}", "quay.db.Replica", "WARN"},
	{"replica {host} caught up", "quay.db.Replica", "INFO"},
	{"parity error corrected in bank {n}", "quay.node.Memory", "INFO"},
	{"uncorrectable parity error in bank {n} at {id}", "quay.node.Memory", "FATAL"},
	{"fan {n} speed {n} rpm", "quay.node.Cooling", "DEBUG"},
	{"node {host} joined the quay ring", "quay.ring.Member", "INFO"},
	{"node {host} left the quay ring after {ms}", "quay.ring.Member", "WARN"},
	{"leader election won by {host} in term {n}", "quay.ring.Election", "INFO"},
	{"snapshot {n} saved to {path} ({size})", "quay.ring.Snapshot", "INFO"},
	{"file does not exist: {path}", "quay.web.Static", "ERROR"},
	{"client denied by server configuration: {path}", "quay.web.Access", "ERROR"},
	{"loaded servicing stack v{n}.{n} with core {path}", "CBS", "INFO"},
	{"package {q} installed, reboot required", "CBS", "INFO"},
	{"steps {n} of {n} done for arrival of {vessel}", "quay.steps.Counter", "INFO"},
	{"heart rate alert {n} bpm for crew member {n}", "quay.crew.Health", "WARN"},
	{"ballast pump {n} pressure {n} bar", "quay.ship.Ballast", "DEBUG"},
	{"ballast pump {n} failed to start", "quay.ship.Ballast", "ERROR"},
	{"weighbridge {n} tared at {n} kg", "quay.gate.Weigh", "INFO"},
	{"truck {n} left without a slot", "quay.gate.Control", "WARN"},
	{"yard block {n} full, {n} boxes waiting", "quay.yard.Plan", "WARN"},
	{"moved box {id} from block {n} to block {n}", "quay.yard.Plan", "INFO"},
	{"cert for {host} expires in {n} days", "quay.net.Tls", "WARN"},
	{"config reloaded from {path}", "quay.core.Config", "INFO"},
	{"worker {n} started with {n} threads", "quay.core.Worker", "INFO"},
	{"worker {n} exited with code {n}", "quay.core.Worker", "ERROR"},
	{"backup of {path} done, {size} in {ms}", "quay.ops.Backup", "INFO"},
	{"mooring line tension {n} kN at {berth}", "quay.berth.Mooring", "DEBUG"},
	{"mooring alarm at {berth}: tension {n} kN", "quay.berth.Mooring", "ERROR"},
}

var (
	users   = []string{"ops", "pilot", "warden", "harbormaster", "clerk", "rigger", "bosun"}
	vessels = []string{"Tern", "Gull", "Heron", "Petrel", "Skua", "Gannet", "Puffin", "Eider"}
	files   = []string{"manifest.json", "stowage.csv", "berths.db", "ledger.wal", "index.html", "plan.xml"}
	dirs    = []string{"/srv/berths", "/var/lib/quay", "/data/ledger", "/srv/www/quay", "/opt/quay/conf"}
	quoted  = []string{`"north bay"`, `"fruit, chilled"`, `"papers missing"`, `"reefer 40ft"`, `"hold for X-ray"`}
	sizes   = []string{"B", "KB", "MB", "GB"}
)

// Generate returns n lines of the named shape and the true event of each
// (an index into the shape's events), deterministic from seed.
func Generate(shape string, n int, seed int64) (lines []string, events []int) {
	si := -1
	for i, s := range Shapes {
		if s == shape {
			si = i
		}
	}
	if si < 0 {
		panic("labelled: unknown shape " + shape)
	}
	r := rand.New(rand.NewSource(seed*1000 + int64(si)))
	// The shape's events: a run of the pool of 20 to 60, from its own start.
	k := 20 + (si*13)%41
	evs := make([]event, k)
	for i := range evs {
		evs[i] = pool[(si*7+i)%len(pool)]
	}
	// Skewed frequencies, as real logs have (Zipf-like, exponent 1.1).
	w := make([]float64, k)
	total := 0.0
	for i := range w {
		w[i] = 1 / math.Pow(float64(i+1), 1.1)
		total += w[i]
	}
	perm := r.Perm(k)
	t := time.Date(2026, 3, 14, 2, 11, 9, 417000000, time.UTC)
	g := &gen{r: r}
	for len(lines) < n {
		x := r.Float64() * total
		e := 0
		for e < k-1 && x >= w[e] {
			x -= w[e]
			e++
		}
		e = perm[e]
		t = t.Add(time.Duration(r.Intn(900)+1) * time.Millisecond)
		msg := g.fill(evs[e].text)
		lines = append(lines, g.header(shape, t, evs[e], e)+msg)
		events = append(events, e)
	}
	return lines, events
}

type gen struct{ r *rand.Rand }

func (g *gen) pick(s []string) string { return s[g.r.Intn(len(s))] }

func (g *gen) num() string {
	switch g.r.Intn(3) {
	case 0:
		return fmt.Sprint(g.r.Intn(10))
	case 1:
		return fmt.Sprint(g.r.Intn(1000))
	}
	return fmt.Sprint(g.r.Intn(100000))
}

func (g *gen) hex(n int) string {
	const digits = "0123456789abcdef"
	b := make([]byte, n)
	for i := range b {
		b[i] = digits[g.r.Intn(16)]
	}
	if !strings.ContainsAny(string(b), "0123456789") {
		b[0] = '7'
	}
	return string(b)
}

func (g *gen) host() string {
	switch g.r.Intn(3) {
	case 0:
		return fmt.Sprintf("quay-gw-%d", g.r.Intn(40))
	case 1:
		return fmt.Sprintf("relay%d.quay.example", g.r.Intn(12))
	}
	return fmt.Sprintf("db%02d.berths.internal", g.r.Intn(30))
}

func (g *gen) ip() string {
	return fmt.Sprintf("10.%d.%d.%d", g.r.Intn(8), g.r.Intn(256), 1+g.r.Intn(254))
}

// fill replaces the placeholders of text with values.
func (g *gen) fill(text string) string {
	var b strings.Builder
	for {
		i := strings.IndexByte(text, '{')
		if i < 0 {
			b.WriteString(text)
			return b.String()
		}
		j := strings.IndexByte(text[i:], '}') + i
		b.WriteString(text[:i])
		switch text[i+1 : j] {
		case "n":
			b.WriteString(g.num())
		case "id":
			b.WriteString(g.hex(8 + g.r.Intn(5)))
		case "uuid":
			b.WriteString(g.hex(8) + "-" + g.hex(4) + "-" + g.hex(4) + "-" + g.hex(4) + "-" + g.hex(12))
		case "host":
			b.WriteString(g.host())
		case "hostport":
			b.WriteString(fmt.Sprintf("%s:%d", g.host(), []int{443, 8080, 5432, 9092}[g.r.Intn(4)]))
		case "ip":
			b.WriteString(g.ip())
		case "ipport":
			b.WriteString(fmt.Sprintf("%s:%d", g.ip(), 1024+g.r.Intn(60000)))
		case "path":
			b.WriteString(g.pick(dirs) + "/" + fmt.Sprint(g.r.Intn(50)) + "/" + g.pick(files))
		case "q":
			b.WriteString(g.pick(quoted))
		case "size":
			b.WriteString(fmt.Sprintf("%d %s", 1+g.r.Intn(999), g.pick(sizes)))
		case "ms":
			b.WriteString(fmt.Sprintf("%d ms", g.r.Intn(20000)))
		case "berth":
			b.WriteString(fmt.Sprintf("berth-%d", 1+g.r.Intn(40)))
		case "method":
			b.WriteString(g.pick([]string{"GET", "POST", "PUT", "DELETE"}))
		case "user":
			b.WriteString(g.pick(users))
		case "vessel":
			b.WriteString(g.pick(vessels))
		}
		text = text[j+1:]
	}
}

var levelsCBS = map[string]string{"DEBUG": "Info", "INFO": "Info", "WARN": "Warning", "ERROR": "Error", "FATAL": "Error"}
var levelsApache = map[string]string{"DEBUG": "debug", "INFO": "notice", "WARN": "warn", "ERROR": "error", "FATAL": "crit"}
var levelsAndroid = map[string]string{"DEBUG": "D", "INFO": "I", "WARN": "W", "ERROR": "E", "FATAL": "F"}

// header writes the line's header in the shape's form; the event's
// component and level go into it where the shape has them.
func (g *gen) header(shape string, t time.Time, ev event, e int) string {
	comp, lv := ev.component, ev.level
	short := comp[strings.LastIndexByte(comp, '.')+1:]
	switch shape {
	case "jvm":
		return fmt.Sprintf("%s %-5s [%s-%d] %s: ", t.Format("2006-01-02 15:04:05,000"), lv, []string{"berth-io", "main", "ledger-pool", "http-nio"}[e%4], g.r.Intn(16), comp)
	case "hdfs":
		return fmt.Sprintf("%s %d %s %s: ", t.Format("060102 150405"), 100+g.r.Intn(9000), lv, comp)
	case "spark":
		return fmt.Sprintf("%s %s %s: ", t.Format("06/01/02 15:04:05"), lv, comp)
	case "zookeeper":
		return fmt.Sprintf("%s - %-5s [%s-%d:%s@%d] - ", t.Format("2006-01-02 15:04:05,000"), lv, []string{"sync", "QuorumPeer", "NIOServerCxn"}[e%3], g.r.Intn(9), short, 100+e*7)
	case "android":
		pid := 1000 + e%5*137
		return fmt.Sprintf("%s %5d %5d %s %s: ", t.Format("01-02 15:04:05.000"), pid, pid+g.r.Intn(300), levelsAndroid[lv], short)
	case "healthapp":
		return fmt.Sprintf("%s|%s_%s|%d|", fmt.Sprintf("%s-%d:%s:%d", t.Format("20060102"), t.Hour(), t.Format("04:05"), t.Nanosecond()/1e6), short, []string{"Step", "Count", "Sensor"}[e%3], 30002300+e%4)
	case "proxy":
		return fmt.Sprintf("[%s] %s - ", t.Format("01.02 15:04:05"), []string{"crane-agent.exe", "gatekeeper.exe", "ledger-sync.exe", "tally.exe"}[e%4])
	case "syslog":
		tags := []string{"gated(pam_unix)", "Quay Desk", "berthd", "crane-ctl", "sshd"}
		return fmt.Sprintf("%s quay-gw-%d %s[%d]: ", t.Format("Jan _2 15:04:05"), e%3, tags[e%len(tags)], 4000+e*11)
	case "ras":
		node := fmt.Sprintf("R%02d-M%d-N%d", g.r.Intn(64), g.r.Intn(2), g.r.Intn(16))
		label := "-"
		if lv == "FATAL" {
			label = "KERNDTLB"
		}
		return fmt.Sprintf("%s %d %s %s %s %s RAS %s %s ", label, t.Unix(), t.Format("2006.01.02"), node,
			t.Format("2006-01-02-15.04.05.000000"), node, []string{"KERNEL", "APP", "MMCS"}[e%3], lv)
	case "openstack":
		return fmt.Sprintf("api.log.%d %s %d %s %s [req-%s - - -] ", g.r.Intn(3), t.Format("2006-01-02 15:04:05.000"), 2000+e%6, lv, strings.ToLower(comp), g.hex(8))
	case "cbs":
		return fmt.Sprintf("%s, %-22s%-7s", t.Format("2006-01-02 15:04:05"), levelsCBS[lv], []string{"CBS", "CSI", "DISM"}[e%3])
	case "apache-error":
		h := fmt.Sprintf("[%s] [%s] ", t.Format("Mon Jan 02 15:04:05 2006"), levelsApache[lv])
		if lv == "ERROR" || lv == "WARN" {
			h += fmt.Sprintf("[client %s] ", g.ip())
		}
		return h
	}
	panic("labelled: no header for " + shape)
}
