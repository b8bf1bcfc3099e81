package report

import (
	"bytes"
	"context"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"bitsift/demo"
	"bitsift/ingest"
	"bitsift/model"
	"bitsift/plan"
)

// demoPage renders the demo stream's report and measured plan as HTML.
func demoPage(t *testing.T, extra ...string) []byte {
	t.Helper()
	in, err := ingest.New(ingest.Config{Model: model.Options{Window: model.Window{Kind: model.WindowAll}}})
	if err != nil {
		t.Fatal(err)
	}
	smp := plan.NewSample(0)
	g := demo.New(1, 5000)
	var buf []byte
	for i := int64(1); i <= 5000; i++ {
		buf = g.Append(buf[:0])
		in.Line(buf, i, "demo")
		smp.Add(buf)
	}
	for i, l := range extra {
		in.Line([]byte(l), int64(5001+i), "demo")
		smp.Add([]byte(l))
	}
	in.Flush()
	snap := in.Snapshot(model.SnapshotOptions{})
	p, err := plan.Make(snap, smp, plan.Options{RecordTimes: true})
	if err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	if err := WriteHTML(&b, Build(snap), p); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// TestHTMLSelfContainedAndEscaped: nothing is fetched from elsewhere and
// text from the log cannot become markup.
func TestHTMLSelfContainedAndEscaped(t *testing.T) {
	hostile := `{"<script>alert(1)</script>":"x","svc":"quayside"}`
	page := string(demoPage(t, hostile))
	for _, bad := range []string{"<script", "<link", " src=", "@import", "url(", "<iframe"} {
		if strings.Contains(page, bad) {
			t.Errorf("page contains %q", bad)
		}
	}
	if !strings.Contains(page, "&lt;script&gt;alert(1)&lt;/script&gt;") {
		t.Error("the hostile field name is not shown escaped")
	}
	for _, want := range []string{`id="fields-table"`, `<svg id="pair-heatmap"`, `id="plan-fields"`, "retention obligations"} {
		if !strings.Contains(page, want) {
			t.Errorf("page lacks %s", want)
		}
	}
}

// TestHTMLReportOnly: report -o html carries the plan chosen from the
// model, saying it is not measured, with the caution.
func TestHTMLReportOnly(t *testing.T) {
	in, _ := ingest.New(ingest.Config{})
	g := demo.New(1, 2000)
	for i := int64(1); i <= 2000; i++ {
		in.Line(g.Append(nil), i, "demo")
	}
	in.Flush()
	var b bytes.Buffer
	if err := Write(&b, Build(in.Snapshot(model.SnapshotOptions{})), "html"); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{`<svg id="pair-heatmap"`, "not measured", "retention obligations", `<tr class="derive"><td>zone</td>`} {
		if !strings.Contains(b.String(), want) {
			t.Errorf("page lacks %s", want)
		}
	}
}

// chromium runs headless Chromium (Debian's package) on a page with args.
func chromium(t *testing.T, page string, args ...string) []byte {
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
	flags := []string{"--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
		"--disable-background-networking", "--disable-component-update", "--disable-sync",
		"--user-data-dir=" + t.TempDir(), "--window-size=1200,1800"}
	cmd := exec.CommandContext(ctx, bin, append(append(flags, args...), "file://"+page)...)
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("chromium %v: %v", args, err)
	}
	return out
}

// TestHTMLInChromium renders the page in a real browser: the DOM after
// load has the table, the heat map's cells and the plan, and a screenshot
// is written.
func TestHTMLInChromium(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a browser")
	}
	dir := t.TempDir()
	page := filepath.Join(dir, "plan.html")
	if err := os.WriteFile(page, demoPage(t), 0o644); err != nil {
		t.Fatal(err)
	}
	dom := string(chromium(t, page, "--dump-dom"))
	for _, want := range []string{`<table id="fields-table">`, `<svg id="pair-heatmap"`, `<rect x=`,
		`<table id="plan-fields">`, `<table id="plan-sizes">`, "retention obligations"} {
		if !strings.Contains(dom, want) {
			t.Errorf("rendered DOM lacks %s", want)
		}
	}
	if n := strings.Count(dom, "<rect "); n < 25 {
		t.Errorf("heat map has %d cells", n)
	}
	shot := filepath.Join(dir, "plan.png")
	chromium(t, page, "--screenshot="+shot)
	b, err := os.ReadFile(shot)
	if err != nil {
		t.Fatal(err)
	}
	// A PNG starts with its 8-byte signature (RFC 2083, section 3.1); a
	// blank page of this size is about 10 kB here.
	if !bytes.HasPrefix(b, []byte("\x89PNG\r\n\x1a\n")) || len(b) < 30_000 {
		t.Errorf("screenshot: %d bytes, PNG signature %v", len(b), bytes.HasPrefix(b, []byte("\x89PNG")))
	}
}
