package cli

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"bitsift/report"
)

// TestReportFollowCountsEveryLineAcrossTwoRotations is the check:
// `report --follow --idle 4s -o json FILE` counts every line of a file that
// rotates twice while it is written (with a shorter idle and grace here).
func TestReportFollowCountsEveryLineAcrossTwoRotations(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "app.log")
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	n := 0
	write := func(d time.Duration) {
		for end := time.Now().Add(d); time.Now().Before(end); {
			for i := 0; i < 20; i++ {
				n++
				fmt.Fprintf(f, `{"n":%d,"level":"info","ts":"2026-01-01T00:00:%02d.%06dZ"}`+"\n", n, n/100000%60, n%1000000)
			}
			time.Sleep(time.Millisecond)
		}
	}
	type result struct {
		code        int
		out, errOut string
	}
	done := make(chan result)
	go func() {
		var out, errb bytes.Buffer
		code := Run(context.Background(), []string{"report", "--follow", "--idle", "1500ms", "--rotate-grace", "300ms", "-o", "json", path},
			IO{In: strings.NewReader(""), Out: &out, Err: &errb})
		done <- result{code, out.String(), errb.String()}
	}()
	write(300 * time.Millisecond)
	for r := 1; r <= 2; r++ {
		if err := os.Rename(path, fmt.Sprintf("%s.%d", path, r)); err != nil {
			t.Fatal(err)
		}
		write(400 * time.Millisecond) // the writer has not reopened yet
		f.Close()
		if f, err = os.Create(path); err != nil {
			t.Fatal(err)
		}
		write(300 * time.Millisecond)
	}
	f.Close()
	res := <-done
	if res.code != ExitOK {
		t.Fatalf("exit %d: %s", res.code, res.errOut)
	}
	var rep report.Report
	if err := json.Unmarshal([]byte(res.out), &rep); err != nil {
		t.Fatalf("report: %v\n%s", err, res.out)
	}
	distinct := 0
	for _, fl := range rep.Fields {
		if fl.Name == "n" {
			distinct = fl.Distinct
		}
	}
	if rep.Lines != int64(n) || rep.Records != n || rep.Rejected != 0 || distinct != n {
		t.Errorf("wrote %d lines; report: %d lines, %d records, %d rejected, %d distinct n", n, rep.Lines, rep.Records, rep.Rejected, distinct)
	}
	rotated := 0
	for _, e := range rep.Events {
		if e.Kind == "rotated" && e.Time != "" {
			rotated++
		}
	}
	if rotated != 2 {
		t.Errorf("%d rotated events, want 2: %+v", rotated, rep.Events)
	}
}

func TestReportFollowFor(t *testing.T) {
	path := filepath.Join(t.TempDir(), "app.log")
	os.WriteFile(path, []byte("a=1 b=2\na=2 b=3\n"), 0o644)
	code, out, errOut := run(t, "", "report", "--follow", "--for", "200ms", path)
	if code != ExitOK || !strings.Contains(out, "2 lines read: 2 records, 0 rejected") {
		t.Errorf("exit %d, stderr %q, report:\n%s", code, errOut, out)
	}
}

func TestReportFollowFlagsNeedFollow(t *testing.T) {
	path := filepath.Join(t.TempDir(), "app.log")
	os.WriteFile(path, []byte("a=1\n"), 0o644)
	tests := [][]string{
		{"report", "--idle", "1s", path},
		{"report", "--follow", "--idle", "1s", path, path},
	}
	for _, args := range tests {
		t.Run(strings.Join(args[1:], " "), func(t *testing.T) {
			if code, _, _ := run(t, "", args...); code != ExitUsage {
				t.Errorf("exit %d, want %d", code, ExitUsage)
			}
		})
	}
}
