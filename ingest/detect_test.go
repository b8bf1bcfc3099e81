package ingest

import (
	"bytes"
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
	"unicode/utf16"

	"bitsift/model"
	"bitsift/testdata/labelled"
)

// Each file of a multi-file read is detected on its own: two header shapes
// and a syslog file, each read fully with its own time form.
func TestDetectPerFile(t *testing.T) {
	dir := t.TempDir()
	var paths []string
	for _, shape := range []string{"spark", "syslog", "apache-error"} {
		lines, _ := labelled.Generate(shape, 300, 2)
		p := filepath.Join(dir, shape+".log")
		if err := os.WriteFile(p, []byte(strings.Join(lines, "\n")+"\n"), 0o644); err != nil {
			t.Fatal(err)
		}
		paths = append(paths, p)
	}
	in, err := New(Config{Clock: func() time.Time { return time.Date(2026, 3, 20, 0, 0, 0, 0, time.UTC) }})
	if err != nil {
		t.Fatal(err)
	}
	if err := in.ReadFiles(context.Background(), paths); err != nil {
		t.Fatal(err)
	}
	s := in.Snapshot(model.SnapshotOptions{})
	if s.Input.Rejected != 0 || s.Records != 900 || s.Input.Format != "header+rfc3164" {
		t.Errorf("format %s, %d records, %d rejected: %+v", s.Input.Format, s.Records, s.Input.Rejected, s.Input.RejectedExamples)
	}
	// Every record's time is its own: all within the generated day.
	if time.Unix(0, s.Oldest).UTC().Format("2006-01-02") != "2026-03-14" || time.Unix(0, s.Newest).UTC().Format("2006-01-02") != "2026-03-14" {
		t.Errorf("times %v .. %v", time.Unix(0, s.Oldest).UTC(), time.Unix(0, s.Newest).UTC())
	}
}

// A stream that changes shape is detected again: after a run of lines the
// first format cannot read, the rest are read in the new one.
func TestRedetectShapeChange(t *testing.T) {
	a, _ := labelled.Generate("jvm", 200, 3)
	b, _ := labelled.Generate("syslog", 200, 3)
	in, err := New(Config{})
	if err != nil {
		t.Fatal(err)
	}
	for i, l := range append(a, b...) {
		in.Line([]byte(l), int64(i+1), "-")
	}
	in.Flush()
	s := in.Snapshot(model.SnapshotOptions{})
	if s.Input.Rejected != redetectRun || s.Records != 400-redetectRun || s.Input.Format != "header+rfc3164" {
		t.Errorf("format %s, %d records, %d rejected", s.Input.Format, s.Records, s.Input.Rejected)
	}
	if w := in.Warnings(); len(w) != 1 || !strings.Contains(w[0], "changed shape") {
		t.Errorf("warnings %q", w)
	}
}

// A forced format that fits badly warns, naming what detection would take;
// an unreadable input explains itself with a --pattern to start from.
func TestForcedFormatWarnsAndUnreadableHelps(t *testing.T) {
	words := "berth twelve is clear\nthe tide turns at noon\nno crane moves today\n"
	in, err := New(Config{Format: "logfmt", Stdin: strings.NewReader(words)})
	if err != nil {
		t.Fatal(err)
	}
	in.ReadFiles(context.Background(), []string{"-"})
	if w := in.Warnings(); len(w) != 1 || !strings.Contains(w[0], "--format logfmt fits these lines badly") {
		t.Errorf("warnings %q", w)
	}
	help := in.Unreadable()
	for _, want := range []string{"line 1: berth twelve is clear", "--pattern '^(?P<f1>\\S+)"} {
		if !strings.Contains(help, want) {
			t.Errorf("help lacks %q:\n%s", want, help)
		}
	}
	lines, _ := labelled.Generate("hdfs", 100, 4)
	ok, err := New(Config{Format: "header", Stdin: strings.NewReader(strings.Join(lines, "\n"))})
	if err != nil {
		t.Fatal(err)
	}
	ok.ReadFiles(context.Background(), []string{"-"})
	if w := ok.Warnings(); len(w) != 0 || ok.Unreadable() != "" {
		t.Errorf("a fitting forced format warns %q / %q", w, ok.Unreadable())
	}
}

// TestUTF16Explained: logfmt lines saved as UTF-16 (little-endian with its
// byte order mark, as Windows PowerShell 5's Out-File writes by default;
// encoded here with Go's unicode/utf16) read as no record, and the reason
// says to convert the text, not to name a format or a pattern.
func TestUTF16Explained(t *testing.T) {
	text := "level=info msg=berthed vessel=7\r\nlevel=warn msg=delayed vessel=9\r\n"
	u := utf16.Encode([]rune(text))
	raw := []byte{0xFF, 0xFE}
	for _, c := range u {
		raw = append(raw, byte(c), byte(c>>8))
	}
	in, err := New(Config{Stdin: bytes.NewReader(raw)})
	if err != nil {
		t.Fatal(err)
	}
	in.ReadFiles(context.Background(), []string{"-"})
	s := in.Snapshot(model.SnapshotOptions{})
	if s.Records != 0 || s.Input.Rejected == 0 {
		t.Fatalf("%d records, %d rejected", s.Records, s.Input.Rejected)
	}
	for _, r := range s.Input.RejectedExamples {
		if r.Reason != reasonUTF16 {
			t.Errorf("line %d: reason %q", r.Line, r.Reason)
		}
	}
	if help := in.Unreadable(); !strings.Contains(help, "iconv -f UTF-16") || strings.Contains(help, "--pattern") {
		t.Errorf("help:\n%s", help)
	}
}

// TestTracesNoRedetection: a stack trace longer than redetectRun lines
// after a record is rejected line by line as a continuation (the reason
// says so), and does not make the Ingester detect the format again.
func TestTracesNoRedetection(t *testing.T) {
	var b strings.Builder
	for i := 0; i < 120; i++ {
		fmt.Fprintf(&b, "2026-03-14 02:%02d:%02d,417 INFO [berth-io-%d] quay.berth.Planner: berth %d assigned\n", i/60, i%60, i%4, i)
		if i == 80 {
			b.WriteString("java.lang.IllegalStateException: over capacity\n")
			for k := 0; k < 2*redetectRun; k++ {
				fmt.Fprintf(&b, "\tat quay.berth.Frame%d.run(Frame.java:%d)\n", k, k)
			}
		}
	}
	in, err := New(Config{Stdin: strings.NewReader(b.String())})
	if err != nil {
		t.Fatal(err)
	}
	in.ReadFiles(context.Background(), []string{"-"})
	s := in.Snapshot(model.SnapshotOptions{})
	if s.Records != 120 || s.Input.Rejected != 1+2*redetectRun || s.Input.Format != "header" {
		t.Errorf("%d records, %d rejected, format %s", s.Records, s.Input.Rejected, s.Input.Format)
	}
	if w := in.Warnings(); len(w) != 0 {
		t.Errorf("warnings %q", w)
	}
	for _, r := range s.Input.RejectedExamples {
		if r.Reason != reasonContinuation {
			t.Errorf("line %d: reason %q", r.Line, r.Reason)
		}
	}
	if s.Index("thread") < 0 {
		t.Errorf("no thread field: %v", s.Fields)
	}
}
