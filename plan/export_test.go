package plan

import (
	"bytes"
	"encoding/json"
	"errors"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

func TestJQPath(t *testing.T) {
	for _, c := range []struct {
		path []string
		want string
	}{
		{[]string{"svc"}, `.svc`},
		{[]string{"http", "status"}, `.http.status`},
		// Zeek's flat keys hold dots (Zeek documentation, conn.log: id.orig_h).
		{[]string{"id.orig_h"}, `."id.orig_h"`},
		{[]string{"a b"}, `."a b"`},
		{[]string{"if"}, `."if"`},
		{[]string{`q"\(x)`}, `."q\"\\(x)"`},
		{[]string{"line\nbreak"}, `."line\u000abreak"`},
	} {
		t.Run(c.want, func(t *testing.T) {
			if got := jqPath(c.path); got != c.want {
				t.Errorf("jqPath(%q) = %s, want %s", c.path, got, c.want)
			}
		})
	}
}

// nestedPlan plans a stream with a nested constant and a flat dotted
// constant, which must be deleted by different paths.
func nestedPlan(t *testing.T) (*Plan, [][]byte) {
	ls := lines(400, func(i int) string {
		return `{"http":{"status":200,"path":"/p` + string(rune('a'+i%7)) + `"},"id.orig_h":"10.0.0.1","n":` + strings.Repeat("1", 1+i%5) + `}`
	})
	s, smp := snapshotOf(t, ls)
	p, err := Make(s, smp, Options{})
	if err != nil {
		t.Fatal(err)
	}
	return p, ls
}

func TestNestedPaths(t *testing.T) {
	p, _ := nestedPlan(t)
	if got := p.DroppedNames(); strings.Join(got, ",") != "http.status,id.orig_h" {
		t.Fatalf("dropped %v, want http.status and id.orig_h", got)
	}
	var b strings.Builder
	if err := WriteJQ(&b, p); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(b.String(), `del(.http.status, ."id.orig_h")`) {
		t.Errorf("jq program:\n%s", b.String())
	}
	if !strings.Contains(b.String(), "# Caution: dropping fields") {
		t.Error("jq program lacks the caution")
	}
	b.Reset()
	if err := WriteOTel(&b, p); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{`delete_key(attributes["http"], "status")`, `delete_key(attributes, "id.orig_h")`, "# Caution:"} {
		if !strings.Contains(b.String(), want) {
			t.Errorf("otel snippet lacks %s:\n%s", want, b.String())
		}
	}
}

// TestJQApplies runs the program with jq: every line keeps exactly the
// fields the plan keeps.
func TestJQApplies(t *testing.T) {
	if _, err := exec.LookPath("jq"); err != nil {
		t.Skip("jq not installed (CI installs it): cannot run the emitted program")
	}
	p, ls := nestedPlan(t)
	var prog strings.Builder
	WriteJQ(&prog, p)
	f := filepath.Join(t.TempDir(), "drop.jq")
	os.WriteFile(f, []byte(prog.String()), 0o644)
	cmd := exec.Command("jq", "-c", "-f", f)
	cmd.Stdin = bytes.NewReader(bytes.Join(ls, []byte("\n")))
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("jq: %v", err)
	}
	for i, l := range bytes.Split(bytes.TrimSpace(out), []byte("\n")) {
		var rec map[string]any
		if err := json.Unmarshal(l, &rec); err != nil {
			t.Fatal(err)
		}
		h, _ := rec["http"].(map[string]any)
		if _, ok := rec["id.orig_h"]; ok || h["status"] != nil || h["path"] == nil || rec["n"] == nil {
			t.Fatalf("line %d after jq: %s", i+1, l)
		}
	}
}

// TestZstdTool: the compressed sizes Measure reports are those of the zstd
// command-line tool at level 3 on the same bytes, within 10% (the library
// is another implementation of the same format, RFC 8878; its default
// level stands for level 3, per its documentation).
func TestZstdTool(t *testing.T) {
	if _, err := exec.LookPath("zstd"); err != nil {
		t.Skip("zstd not installed (CI installs it)")
	}
	var before, after []byte
	measuredText = func(b, a []byte) { before, after = bytes.Clone(b), bytes.Clone(a) }
	defer func() { measuredText = nil }()
	p := demoPlan(t, 20_000, Options{})
	n := float64(p.Measured.Records)
	for _, c := range []struct {
		name string
		text []byte
		got  float64
	}{{"before", before, p.Measured.Before.Compressed * n}, {"after", after, p.Measured.After.Compressed * n}} {
		t.Run(c.name, func(t *testing.T) {
			cmd := exec.Command("zstd", "-3", "-c", "-q")
			cmd.Stdin = bytes.NewReader(c.text)
			out, err := cmd.Output()
			if err != nil {
				t.Fatal(err)
			}
			want := float64(len(out))
			if r := c.got / want; r < 0.9 || r > 1.1 {
				t.Errorf("measured %v bytes, zstd -3 %v (ratio %.3f)", c.got, want, r)
			}
			t.Logf("measured %v bytes, zstd -3 %v", c.got, want)
		})
	}
}

func TestWriteFileWholeOrNothing(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "plan.jq")
	os.WriteFile(path, []byte("old"), 0o644)
	failed := errors.New("disk full")
	err := WriteFile(path, func(w io.Writer) error {
		io.WriteString(w, "half a pl")
		return failed
	})
	if !errors.Is(err, failed) {
		t.Fatalf("err %v", err)
	}
	if b, _ := os.ReadFile(path); string(b) != "old" {
		t.Errorf("a failed write changed the file: %q", b)
	}
	if es, _ := os.ReadDir(dir); len(es) != 1 {
		t.Errorf("temporary file left behind: %v", es)
	}
	if err := WriteFile(path, func(w io.Writer) error { _, err := io.WriteString(w, "new"); return err }); err != nil {
		t.Fatal(err)
	}
	if b, _ := os.ReadFile(path); string(b) != "new" {
		t.Errorf("file holds %q", b)
	}
	if err := WriteFile(filepath.Join(dir, "no", "such", "dir"), func(io.Writer) error { return nil }); err == nil {
		t.Error("writing into a missing folder succeeded")
	}
	// A rename over a device or a pipe would replace it with a plain file
	// (as root, even /dev/full): anything but a regular file is refused. A
	// pipe of the test's own stands for them.
	fifo := filepath.Join(dir, "pipe")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Fatal(err)
	}
	if err := WriteFile(fifo, func(io.Writer) error { return nil }); err == nil {
		t.Error("writing over a named pipe was allowed")
	}
	if fi, err := os.Lstat(fifo); err != nil || fi.Mode()&os.ModeNamedPipe == 0 {
		t.Errorf("the pipe was replaced: %v %v", fi, err)
	}
	if err := WriteFile(dir, func(io.Writer) error { return nil }); err == nil {
		t.Error("writing over a folder was allowed")
	}
}
