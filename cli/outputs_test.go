package cli

import (
	"context"
	"encoding/csv"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"bitsift/demo"
)

// TestReportFormatsCarryChanges: Markdown, CSV and HTML of report
// --baseline carry the broken rule of the demo incident (route → upstream,
// package demo), the timeline and the surprising records. The CSV is read
// back with encoding/csv (RFC 4180), the HTML rendered in headless
// Chromium.
func TestReportFormatsCarryChanges(t *testing.T) {
	if testing.Short() {
		t.Skip("reads 110,000 demo lines")
	}
	g := demo.New(1, 0)
	lines := make([]string, 110_000)
	for i := range lines {
		lines[i] = string(g.Append(nil)) + "\n"
	}
	code, base, errs := run(t, strings.Join(lines[:60_000], ""), "report", "-o", "json", "-")
	if code != 0 {
		t.Fatalf("baseline: exit %d: %s", code, errs)
	}
	bp := write(t, "base.json", []byte(base))
	inc := write(t, "later.jsonl", []byte(strings.Join(lines[60_000:], "")))

	_, md, _ := run(t, "", "report", "-o", "md", "--baseline", bp, inc)
	for _, want := range []string{"## Timeline", "| broken | upstream | route |", "### Broken rules", "| upstream | route |", "## Most surprising records"} {
		if !strings.Contains(md, want) {
			t.Errorf("Markdown lacks %q", want)
		}
	}

	_, out, _ := run(t, "", "report", "-o", "csv", "--baseline", bp, inc)
	rd := csv.NewReader(strings.NewReader(out))
	rd.FieldsPerRecord = -1
	rows, err := rd.ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	seen := map[string]bool{}
	for _, r := range rows {
		if len(r) >= 4 && (r[0] == "broken" || r[0] == "timeline") && r[2] == "upstream" && r[3] == "route" {
			seen[r[0]+"/"+r[1]] = true
		}
		if len(r) > 0 && r[0] == "surprising" {
			seen["surprising"] = true
		}
	}
	for _, want := range []string{"broken/rule", "broken/example", "timeline/broken", "surprising"} {
		if !seen[want] {
			t.Errorf("CSV lacks a %s row for upstream given route", want)
		}
	}

	_, page, _ := run(t, "", "report", "-o", "html", "--baseline", bp, inc)
	path := write(t, "report.html", []byte(page))
	dom := renderDOM(t, path)
	for _, want := range []string{"<title>bitsift report</title>", `<table id="broken-table">`, "upstream given route",
		`<table id="timeline-table">`, `<table id="surprising-table">`, "not measured"} {
		if !strings.Contains(dom, want) {
			t.Errorf("rendered DOM lacks %s", want)
		}
	}
}

// renderDOM loads a page in headless Chromium and returns the DOM after
// load (flags as in report's Chromium test).
func renderDOM(t *testing.T, page string) string {
	t.Helper()
	bin := ""
	for _, name := range []string{"chromium", "chromium-browser"} {
		if p, err := exec.LookPath(name); err == nil {
			bin = p
			break
		}
	}
	if bin == "" {
		t.Skip("Chromium not installed (apt-get install chromium; CI installs it): the page is not rendered")
	}
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
	defer cancel()
	out, err := exec.CommandContext(ctx, bin, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
		"--no-first-run", "--disable-background-networking", "--disable-component-update", "--disable-sync",
		"--user-data-dir="+t.TempDir(), "--dump-dom", "file://"+filepath.Clean(page)).Output()
	if err != nil {
		t.Fatalf("chromium: %v", err)
	}
	return string(out)
}
