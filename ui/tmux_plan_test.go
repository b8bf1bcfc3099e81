package ui

import (
	"strings"
	"testing"
	"time"
)

// TestTmuxPlanRecords uses the Plan screen as a person would: the record
// classes appear beside the fields once the background measurement ends,
// with the health checks (package demo: route /healthz) among them; + pins
// one whole (it shows kept), u unpins it; x on a derived field shows it
// dropped; both cautions stay on the screen.
func TestTmuxPlanRecords(t *testing.T) {
	t.Parallel() // waits on the screen, mostly; the serial tmux tests time keys
	if testing.Short() {
		t.Skip("-short: the end-to-end screen test runs a binary for seconds")
	}
	bin := buildBinary(t)
	tt := startTmux(t, 120, 40, bin)
	tt.waitFor("[1 Fields]", "rec/s")
	// Record classes are judged on 5,000 measured records or more: let
	// the window fill past that before the first measurement.
	deadline := time.Now().Add(60 * time.Second)
	for shownLines(t, tt.capture()) < 12_000 {
		if time.Now().After(deadline) {
			t.Fatalf("the demo never reached 12,000 lines:\n%s", tt.capture())
		}
		time.Sleep(200 * time.Millisecond)
	}
	tt.keys("5")
	screen := tt.waitFor("[5 Plan]", `rec route="/healthz"`, "Caution: dropping fields", "Sampling deletes whole records")
	moveTo := func(want string) {
		t.Helper()
		tt.keys("g")
		for range 40 {
			if screen = tt.capture(); cursorRow(screen, want) {
				return
			}
			tt.keys("j")
		}
		t.Fatalf("the cursor never reached %q:\n%s", want, screen)
	}
	moveTo(`rec route="/healthz"`)
	if !cursorRow(screen, "sample") {
		t.Fatalf("the health checks are not offered for sampling:\n%s", screen)
	}
	tt.keys("+")
	waitRow(t, tt, `rec route="/healthz"`, "keep", "kept")
	tt.keys("u")
	waitRow(t, tt, `rec route="/healthz"`, "sample")
	moveTo("zone ")
	if !cursorRow(tt.capture(), "derive") {
		t.Fatalf("zone is not derived:\n%s", tt.capture())
	}
	tt.keys("x")
	screen = waitRow(t, tt, "zone ", "drop ", "drop")
	for _, want := range []string{"Caution: dropping fields", "Sampling deletes whole records"} {
		if !strings.Contains(screen, want) {
			t.Errorf("the plan screen lost %q:\n%s", want, screen)
		}
	}
	tt.quit()
}

// waitRow waits until the row under the cursor holds want.
func waitRow(t *testing.T, tt *tmuxTerm, row string, want ...string) string {
	t.Helper()
	deadline := time.Now().Add(45 * time.Second)
	var screen string
	for time.Now().Before(deadline) {
		screen = tt.capture()
		ok := cursorRow(screen, row)
		for _, w := range want {
			ok = ok && cursorRow(screen, w)
		}
		if ok {
			return screen
		}
		time.Sleep(100 * time.Millisecond)
	}
	t.Fatalf("the row %q never showed %q:\n%s", row, want, screen)
	return ""
}
