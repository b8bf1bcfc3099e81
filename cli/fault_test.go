package cli

import (
	"bytes"
	"compress/gzip"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestReportFaults: a damaged archive still gets its report, then exit 3
// (partial) or 2 (nothing read), with the fault in one line on stderr.
func TestReportFaults(t *testing.T) {
	dir := t.TempDir()
	var b bytes.Buffer
	for i := 0; i < 30000; i++ {
		fmt.Fprintf(&b, "n=%d level=info pad=%d\n", i, i*7919%100003)
	}
	var gz bytes.Buffer
	zw := gzip.NewWriter(&gz)
	zw.Write(b.Bytes())
	zw.Close()
	write := func(name string, p []byte) string {
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, p, 0o644); err != nil {
			t.Fatal(err)
		}
		return path
	}
	half := write("half.log.gz", gz.Bytes()[:gz.Len()/2])
	header := write("header.log.gz", gz.Bytes()[:8])
	good := write("good.log", []byte("a=1\n"))
	secret := write("secret.log", []byte("a=1\n"))
	os.Chmod(secret, 0)
	tests := []struct {
		name     string
		args     []string
		code     int
		stderr   string
		rootSkip bool
	}{
		{"truncated gzip", []string{half}, ExitPartial, "at byte", false},
		{"nothing readable", []string{header}, ExitUnreadable, "truncated", false},
		{"missing file", []string{filepath.Join(dir, "nothere.log")}, ExitUnreadable, "no such file", false},
		{"one of two missing", []string{good, filepath.Join(dir, "nothere.log")}, ExitPartial, "no such file", false},
		{"permission", []string{secret}, ExitUnreadable, "permission denied", true},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if tt.rootSkip && os.Geteuid() == 0 {
				t.Skip("root reads files whatever their mode")
			}
			code, out, errOut := run(t, "", append([]string{"report"}, tt.args...)...)
			if code != tt.code {
				t.Errorf("exit %d, want %d", code, tt.code)
			}
			if !strings.Contains(out, "lines read") || !strings.Contains(out, "fault: ") {
				t.Errorf("no report with its fault before the exit:\n%s", out)
			}
			if strings.Count(errOut, "\n") != 1 || !strings.Contains(errOut, tt.stderr) || !strings.Contains(errOut, dir) {
				t.Errorf("stderr %q, want one line naming the file and %q", errOut, tt.stderr)
			}
		})
	}
}
