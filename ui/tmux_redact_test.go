package ui

import (
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"bitsift/internal/planted"
)

// focusNameRE reads the field on show from the Focus screen's header.
var focusNameRE = regexp.MustCompile(`(?m)^(\S+)  \S+ · [0-9.]+ bits of`)

// focusName waits for the Focus screen to show a field other than not,
// read from its header, and returns it with the screen.
func focusName(tt *tmuxTerm, not string) (string, string) {
	tt.t.Helper()
	deadline := time.Now().Add(45 * time.Second)
	for {
		screen := tt.capture()
		if m := focusNameRE.FindStringSubmatch(screen); m != nil && m[1] != not && strings.Contains(screen, "TOP VALUES") {
			return m[1], screen
		}
		if time.Now().After(deadline) {
			tt.t.Fatalf("the Focus screen never showed a field other than %q:\n%s", not, screen)
		}
		time.Sleep(100 * time.Millisecond)
	}
}

// fieldCountRE reads how many fields the Fields screen lists.
var fieldCountRE = regexp.MustCompile(`([0-9]+) of [0-9]+ fields`)

// hashRowRE is a value row shown as a hash (~ and 16 base32 characters).
var hashRowRE = regexp.MustCompile(`(?m)^[▸ ] ~[A-Z2-7]{16} `)

// TestTmuxRedactScreensHidePlantedSecrets: the planted e-mail, token and
// number (package planted: in values, in free text that would get a
// template, in a number that would get buckets and, under --redact, in
// field names) reach no screen under --redact, nor under --redact-fields
// naming the fields that hold them: every screen, the Focus screen of every
// field with the lines behind its top value, the lines behind a surprising
// record, the rejected lines, the help, and the screen and baseline files
// the screen saves.
func TestTmuxRedactScreensHidePlantedSecrets(t *testing.T) {
	t.Parallel() // waits on the screen, mostly; the serial tmux tests time keys
	if testing.Short() {
		t.Skip("-short: the end-to-end screen test runs a binary for seconds")
	}
	bin := buildBinary(t)
	// The raw values of the other bookings and the companions of a
	// redacted field must not show either.
	secrets := append([]string{"quaymail", "skipper", "booked for", "~template", "~log"}, planted.Fragments...)
	for _, c := range []struct {
		name, flag string
		names      bool
	}{
		{"redact", "--redact", true},
		{"redact-fields", "--redact-fields " + planted.Fields, false},
	} {
		t.Run(c.name, func(t *testing.T) {
			dir := t.TempDir()
			if err := os.WriteFile(filepath.Join(dir, "berths.jsonl"), planted.Log(c.names), 0o644); err != nil {
				t.Fatal(err)
			}
			tt := startTmux(t, 120, 40, "cd "+dir+" && "+bin+" replay "+c.flag+" berths.jsonl")
			check := func(where, screen string) {
				t.Helper()
				for _, s := range secrets {
					if strings.Contains(screen, s) {
						t.Errorf("%s: %q is on the screen:\n%s", where, s, screen)
					}
				}
			}
			screen := tt.waitFor("[1 Fields]", "done", "rejected 1", "401 lines")
			check("Fields", screen)
			m := fieldCountRE.FindStringSubmatch(screen)
			if m == nil {
				t.Fatalf("no field count on the Fields screen:\n%s", screen)
			}
			total, _ := strconv.Atoi(m[1])
			tt.keys("2")
			check("Pairs", tt.waitFor("[2 Pairs]", "H(row|col)"))
			// Every field up close, round the fields by name, and the
			// lines behind each one's top value.
			tt.keys("3")
			name, screen := focusName(tt, "")
			seen := map[string]bool{}
			for range 2*total + 5 {
				if len(seen) == total {
					break
				}
				if seen[name] {
					tt.keys("l")
					name, screen = focusName(tt, name)
					continue
				}
				seen[name] = true
				check("Focus on "+name, screen)
				if (c.names || strings.Contains(","+planted.Fields+",", ","+name+",")) && !hashRowRE.MatchString(screen) {
					t.Errorf("Focus on %s: no value shown as a hash:\n%s", name, screen)
				}
				tt.keys("Enter")
				check("lines behind the top value of "+name, tt.waitFor("LINES BEHIND", "no raw line kept"))
				// Escape alone, and wait for it: an Escape read together
				// with the next key is one alt+key. The field on show
				// afterwards is the one l moves on from.
				tt.keys("Escape")
				name, _ = focusName(tt, "")
				tt.keys("l")
				name, screen = focusName(tt, name)
			}
			if len(seen) != total || c.names && total < 20 || !c.names && total != 5 {
				t.Errorf("the Focus screen showed %d of %d fields: %v", len(seen), total, seen)
			}
			tt.keys("4")
			check("Drift", tt.waitFor("[4 Drift]", "SURPRISING RECORDS  12", "▸"))
			tt.keys("Enter")
			check("lines behind a surprising record", tt.waitFor("LINES BEHIND  the surprising record", "no raw line kept"))
			tt.keys("Escape")
			tt.waitFor("SURPRISING RECORDS")
			tt.keys("b")
			check("Drift, pinned", tt.waitFor("BASELINE  pinned at"))
			tt.keys("o")
			tt.waitFor("screen written to")
			tt.keys("f")
			tt.waitFor("window written to")
			tt.keys("5")
			check("Plan", tt.waitFor("[5 Plan]", "Caution: dropping fields"))
			tt.keys("6")
			check("Input", tt.waitFor("[6 Input]", "REJECTED  1 of 401 lines", "berths.jsonl:9"))
			tt.keys("r")
			check("rejected lines", tt.waitFor("REJECTED  1 of 401 lines"))
			tt.keys("?")
			check("help", tt.waitFor("MOVE", "SCREENS"))
			tt.keys("Escape")
			tt.waitFor("[6 Input]")
			tt.quit()
			drillDrift(t, bin, dir, c.flag, c.names, check)
			// What the screen saved: the screen as Markdown and JSON,
			// and the window as a baseline.
			saved, _ := filepath.Glob(filepath.Join(dir, "bitsift-*"))
			if len(saved) != 3 {
				t.Errorf("the screen saved %v, want a screen .md and .json and a baseline", saved)
			}
			for _, p := range saved {
				b, err := os.ReadFile(p)
				if err != nil {
					t.Fatal(err)
				}
				for _, s := range secrets {
					if strings.Contains(string(b), s) {
						t.Errorf("%s: %q is in the saved file", filepath.Base(p), s)
					}
				}
			}
		})
	}
}

var limitsRE = regexp.MustCompile(`"limits":\{"` + planted.Number + `":([0-2])\}`)

// drillDrift replays an incident against a baseline made with the same
// redaction key (so the hashes match): the planted bookings alone, three
// times over (user, token and fee shift) and, with the names, the berth's
// limit moved on (a broken rule); Enter on each of the Drift screen's first
// items opens the lines behind it, and every screen is checked.
func drillDrift(t *testing.T, bin, dir, flag string, names bool, check func(where, screen string)) {
	t.Helper()
	key := filepath.Join(dir, "redact.key")
	if err := os.WriteFile(key, []byte("a key of our own for the berths test"), 0o600); err != nil {
		t.Fatal(err)
	}
	var inc strings.Builder
	for _, l := range strings.Split(string(planted.Log(names)), "\n") {
		if strings.Contains(l, `"user":"`+planted.Mail+`"`) && strings.HasSuffix(l, "}") {
			inc.WriteString(limitsRE.ReplaceAllStringFunc(l, func(m string) string {
				n, _ := strconv.Atoi(limitsRE.FindStringSubmatch(m)[1])
				return `"limits":{"` + planted.Number + `":` + strconv.Itoa((n+1)%3) + "}"
			}) + "\n")
		}
	}
	if err := os.WriteFile(filepath.Join(dir, "incident.jsonl"), []byte(strings.Repeat(inc.String(), 3)), 0o644); err != nil {
		t.Fatal(err)
	}
	args := append([]string{"report", "-o", "json", "--redact-key", key}, strings.Fields(flag)...)
	base, err := runBinary(bin, append(args, filepath.Join(dir, "berths.jsonl"))...)
	if err != nil {
		t.Fatalf("report %v: %v", args, err)
	}
	check("the baseline report", string(base))
	if err := os.WriteFile(filepath.Join(dir, "base.json"), base, 0o644); err != nil {
		t.Fatal(err)
	}
	tt := startTmux(t, 120, 40, "cd "+dir+" && "+bin+" replay "+flag+" --redact-key redact.key --baseline base.json incident.jsonl")
	tt.waitFor("[1 Fields]", "done")
	tt.keys("4")
	want := []string{"BASELINE  from base.json", "SHIFTED FIELDS", "Δ user", "TIMELINE", "▸"}
	if names {
		want = append(want, "BROKEN RULES  1")
	}
	check("Drift against the baseline", tt.waitFor(want...))
	for i := range 8 {
		tt.keys("Enter")
		check("lines behind Drift item "+strconv.Itoa(i+1), tt.waitFor("LINES BEHIND", "esc back"))
		tt.keys("Escape")
		tt.waitFor("BASELINE  from base.json")
		tt.keys("j")
	}
	tt.quit()
}
