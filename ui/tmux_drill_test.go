package ui

import (
	"bufio"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"bitsift/demo"
)

// incidentFiles writes a baseline report of the demo stream's first 60,000
// lines (made by the binary under test's report command) and the incident,
// lines 70,001–100,000 of the stream (package demo), as a file of its own.
func incidentFiles(t *testing.T, bin string) (base, inc string) {
	t.Helper()
	dir := t.TempDir()
	g := demo.New(1, 0)
	write := func(name string, n int) string {
		p := filepath.Join(dir, name)
		f, err := os.Create(p)
		if err != nil {
			t.Fatal(err)
		}
		w := bufio.NewWriter(f)
		var b []byte
		for range n {
			b = g.Append(b[:0])
			w.Write(b)
			w.WriteByte('\n')
		}
		if err := w.Flush(); err != nil {
			t.Fatal(err)
		}
		f.Close()
		return p
	}
	healthy := write("healthy.jsonl", 60_000)
	write("skip.jsonl", 10_000)
	inc = write("incident.jsonl", 30_000)
	base = filepath.Join(dir, "base.json")
	out, err := runBinary(bin, "report", "-o", "json", healthy)
	if err != nil {
		t.Fatalf("report: %v", err)
	}
	if err := os.WriteFile(base, out, 0o644); err != nil {
		t.Fatal(err)
	}
	return base, inc
}

// fileLine reads line n (from 1) of path.
func fileLine(t *testing.T, path string, n int) string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 1<<20), 1<<20)
	for i := 1; sc.Scan(); i++ {
		if i == n {
			return sc.Text()
		}
	}
	t.Fatalf("%s has no line %d", path, n)
	return ""
}

var nowRecordsRE = regexp.MustCompile(`now ([0-9,]+)`)

// TestTmuxBaselineFirstFrame: replay and watch with --baseline show the
// broken rule of the demo incident (route → upstream, package demo) on the
// Drift screen from the first frames, long before the file is read (a
// rolling baseline would need two window lengths).
func TestTmuxBaselineFirstFrame(t *testing.T) {
	if testing.Short() {
		t.Skip("-short: the end-to-end screen test runs a binary for seconds")
	}
	bin := buildBinary(t)
	base, inc := incidentFiles(t, bin)
	for _, cmd := range []string{
		bin + " replay --speed 1 --baseline " + base + " " + inc,
		bin + " watch --from-start --baseline " + base + " " + inc,
	} {
		tt := startTmux(t, 80, 24, cmd)
		tt.waitFor("[1 Fields]")
		tt.keys("4")
		screen := tt.waitFor("BASELINE  from base.json", "BROKEN RULES", "upstream given route")
		if strings.Contains(cmd, "replay") {
			m := nowRecordsRE.FindStringSubmatch(screen)
			if m == nil {
				t.Fatalf("no record count on the Drift screen:\n%s", screen)
			}
			n, _ := strconv.Atoi(strings.ReplaceAll(m[1], ",", ""))
			if n >= 30_000 {
				t.Errorf("the broken rule showed only after %d records, the whole file", n)
			}
		}
		tt.quit()
	}
}

var whereRE = regexp.MustCompile(`incident\.jsonl:([0-9]+)`)

// TestTmuxDrillDown: Enter on a broken rule's example and on a surprising
// record opens the lines behind them; every file:line shown is checked
// against the file itself.
func TestTmuxDrillDown(t *testing.T) {
	if testing.Short() {
		t.Skip("-short: the end-to-end screen test runs a binary for seconds")
	}
	bin := buildBinary(t)
	base, inc := incidentFiles(t, bin)
	tt := startTmux(t, 120, 40, bin+" replay --baseline "+base+" "+inc)
	tt.waitFor("done")
	tt.keys("4")
	tt.waitFor("BROKEN RULES", "▸   route=/v1/berths → upstream=ledger", "SURPRISING RECORDS  12")
	tt.keys("Enter")
	screen := tt.waitFor("LINES BEHIND", "records in the window")
	lines := whereRE.FindAllStringSubmatch(screen, -1)
	if len(lines) < 3 {
		t.Fatalf("the drill-down shows %d lines:\n%s", len(lines), screen)
	}
	for _, m := range lines {
		n, _ := strconv.Atoi(m[1])
		l := fileLine(t, inc, n)
		if !strings.Contains(l, `"route":"/v1/berths"`) || !strings.Contains(l, `"upstream":"ledger"`) {
			t.Errorf("line %d shown for route=/v1/berths → upstream=ledger is: %s", n, l)
		}
	}
	// Down past the other example, the shifted fields and the timeline
	// to the first surprising record.
	tt.keys("Escape")
	var m []string
	for range 30 {
		tt.keys("j")
		screen = tt.waitFor("▸")
		for _, l := range strings.Split(screen, "\n") {
			if strings.HasPrefix(l, "▸") {
				m = regexp.MustCompile(`bits  line ([0-9,]+)`).FindStringSubmatch(l)
			}
		}
		if m != nil {
			break
		}
	}
	if m == nil {
		t.Fatalf("the cursor never reached a surprising record:\n%s", screen)
	}
	n, _ := strconv.Atoi(strings.ReplaceAll(m[1], ",", ""))
	tt.keys("Enter")
	screen = tt.waitFor("LINES BEHIND", "incident.jsonl:"+strconv.Itoa(n))
	if got := whereRE.FindAllStringSubmatch(screen, -1); len(got) != 1 {
		t.Errorf("a surprising record opens %d lines:\n%s", len(got), screen)
	}
	if l := fileLine(t, inc, n); !strings.Contains(screen, l[:40]) {
		t.Errorf("line %d of the file (%s) is not on the screen:\n%s", n, l, screen)
	}
	// Focus on host (filter the Fields screen, open the field), enter on
	// its most frequent value: every line shown has that host.
	tt.keys("Escape", "1", "/", "h", "o", "s", "t", "Enter", "Enter")
	screen = tt.waitFor("host  informative", "▸ qs-api-")
	tt.keys("Enter")
	screen = tt.waitFor("LINES BEHIND  host=qs-api-", "records in the window")
	host := regexp.MustCompile(`LINES BEHIND  host=(qs-api-[0-9]+)`).FindStringSubmatch(screen)[1]
	lines = whereRE.FindAllStringSubmatch(screen, -1)
	if len(lines) < 3 {
		t.Fatalf("the drill-down shows %d lines:\n%s", len(lines), screen)
	}
	for _, m := range lines {
		n, _ := strconv.Atoi(m[1])
		if l := fileLine(t, inc, n); !strings.Contains(l, `"host":"`+host+`"`) {
			t.Errorf("line %d shown for host=%s is: %s", n, host, l)
		}
	}
	// Pairs: the cell upstream × route, enter on its most frequent value
	// pair: every line shown has both values.
	tt.keys("Escape", "2")
	tt.waitFor("[2 Pairs]", "ROW ")
	pairsCell(t, tt, "ROW ", "upstream", "j")
	tt.keys("h", "h", "h", "h", "h", "h", "h", "h", "h", "h", "h", "h", "h", "h", "h", "h", "h", "h", "h", "h")
	pairsCell(t, tt, "COL ", "route", "l")
	tt.waitFor("VALUE PAIRS", "▸ ")
	tt.keys("Enter")
	screen = tt.waitFor("LINES BEHIND  upstream=", "records in the window")
	pair := regexp.MustCompile(`LINES BEHIND  upstream=(\S+) · route=(\S+)`).FindStringSubmatch(screen)
	if pair == nil {
		t.Fatalf("no value pair in the title:\n%s", screen)
	}
	lines = whereRE.FindAllStringSubmatch(screen, -1)
	if len(lines) < 3 {
		t.Fatalf("the drill-down shows %d lines:\n%s", len(lines), screen)
	}
	for _, m := range lines {
		n, _ := strconv.Atoi(m[1])
		l := fileLine(t, inc, n)
		if !strings.Contains(l, `"upstream":"`+pair[1]+`"`) || !strings.Contains(l, `"route":"`+pair[2]+`"`) {
			t.Errorf("line %d shown for upstream=%s · route=%s is: %s", n, pair[1], pair[2], l)
		}
	}
	tt.keys("Escape")
	tt.quit()
}

// pairsCell moves the Pairs cursor with key until the ROW (or COL) line
// names field.
func pairsCell(t *testing.T, tt *tmuxTerm, which, field, key string) {
	t.Helper()
	re := regexp.MustCompile(which + `[a-t] ` + regexp.QuoteMeta(field) + `\b`)
	at := regexp.MustCompile(which + `[a-t] `)
	for range 25 {
		screen := tt.capture()
		if re.MatchString(screen) {
			return
		}
		before := at.FindString(screen)
		tt.keys(key)
		// Wait for the screen to take the key before the next: a loaded
		// machine draws late, and keys sent ahead would overshoot.
		for deadline := time.Now().Add(10 * time.Second); time.Now().Before(deadline); {
			if at.FindString(tt.capture()) != before {
				break
			}
			time.Sleep(20 * time.Millisecond)
		}
	}
	t.Fatalf("the Pairs cursor never reached %s%s:\n%s", which, field, tt.capture())
}

// runBinary runs the built binary and returns its standard output.
func runBinary(bin string, args ...string) ([]byte, error) {
	return exec.Command(bin, args...).Output()
}
