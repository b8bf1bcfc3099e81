package cli

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// TestWatchHeadless: without a terminal, watch follows the file and prints
// the text report once --idle or --for ends the follow.
func TestWatchHeadless(t *testing.T) {
	p := write(t, "app.log", demoLines(2000))
	for _, tc := range []struct {
		name string
		args []string
		want string
	}{
		{"idle from start", []string{"watch", "--from-start", "--idle", "300ms", p}, "2000 lines read: 2000 records"},
		{"for, last lines", []string{"watch", "--lines", "10", "--for", "500ms", p}, "10 lines read: 10 records"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			start := time.Now()
			code, out, errs := run(t, "", tc.args...)
			if code != 0 {
				t.Fatalf("exit %d: %s", code, errs)
			}
			if !strings.Contains(out, tc.want) {
				t.Errorf("report does not say %q:\n%s", tc.want, out)
			}
			if time.Since(start) > 20*time.Second {
				t.Errorf("watch did not stop on its own")
			}
		})
	}
}

func TestWatchUsage(t *testing.T) {
	p := write(t, "app.log", demoLines(10))
	for _, args := range [][]string{
		{"watch", "--lines", "-1", p},
		{"watch", "--lines", "5", "--from-start", p},
		{"watch", "--rotate-grace", "0s", p},
		{"replay", "--speed", "fast", p},
	} {
		t.Run(strings.Join(args, " "), func(t *testing.T) {
			if code, _, errs := run(t, "", args...); code != ExitUsage || errs == "" {
				t.Errorf("exit %d, stderr %q; want a usage error", code, errs)
			}
		})
	}
}

// TestReplayHeadless: without a terminal, replay reads every file to its
// end, in the order of their first timestamps, and prints the report.
func TestReplayHeadless(t *testing.T) {
	dir := t.TempDir()
	a, b := filepath.Join(dir, "a.log"), filepath.Join(dir, "b.log")
	lines := strings.SplitAfter(string(demoLines(3000)), "\n")
	if err := os.WriteFile(a, []byte(strings.Join(lines[1500:], "")), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(b, []byte(strings.Join(lines[:1500], "")), 0o644); err != nil {
		t.Fatal(err)
	}
	code, out, errs := run(t, "", "replay", a, b)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if !strings.Contains(out, "3000 lines read: 3000 records") {
		t.Errorf("replay of two files does not count 3000 lines:\n%s", out)
	}
}
