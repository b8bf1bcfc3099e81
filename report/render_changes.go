package report

import (
	"fmt"
	"sort"
	"strings"

	"bitsift/sanitize"
)

// Caps of the text sections (the JSON has everything).
const (
	textDeterminants = 10
	textBroken       = 8
	textSurprising   = 8
)

// writeChanges adds the determinants, shifts, broken rules and surprising
// records to a text report, each line within 80 columns.
func writeChanges(b *strings.Builder, r *Report) {
	if r.DeepRecords > 0 && r.DeepRecords < r.Records {
		fmt.Fprintf(b, "\nDeterminants and surprising records: over the newest %d of %d records.\n",
			r.DeepRecords, r.Records)
	}
	if len(r.Determinants) > 0 || r.DeterminantsCut {
		b.WriteString("\nDeterminants of more than one field (together they fix the target):\n")
		for i, d := range r.Determinants {
			if i == textDeterminants {
				fmt.Fprintf(b, "  ... %d more in the JSON report\n", len(r.Determinants)-i)
				break
			}
			given := make([]string, len(d.Given))
			for j, g := range d.Given {
				given[j] = sanitize.Fit(g, 16)
			}
			fmt.Fprintf(b, "  %s ← %s  H(F|G)=%.3f  RFI=%.3f%s\n", sanitize.Fit(d.Target, 20),
				strings.Join(given, " + "), d.Bits, d.RFI, approxMark(d.EMIApprox))
		}
		if r.DeterminantsCut {
			b.WriteString("  (search stopped at its work bound: the list may be incomplete)\n")
		}
	}
	if r.Baseline != nil {
		fmt.Fprintf(b, "\nWhat changed against the baseline (%s, %d records):\n",
			sanitize.Fit(r.Baseline.Source, 32), r.Baseline.Records)
		writeShifts(b, r)
		writeBroken(b, r)
	}
	writeTimeline(b, r)
	writeSurprising(b, r)
}

func approxMark(approx bool) string {
	if approx {
		return "  (E[I] approximated)"
	}
	return ""
}

func writeShifts(b *strings.Builder, r *Report) {
	shifted := r.ShiftedFields()
	if len(shifted) == 0 {
		b.WriteString("  No field's distribution shifted.\n")
		return
	}
	fmt.Fprintf(b, "  %-24s %9s %10s %7s\n", "SHIFTED FIELD", "JSD BITS", "ΔH BITS", "Z")
	for _, f := range shifted {
		z := "-"
		if f.Shift.Z != 0 {
			z = fmt.Sprintf("%.1f", f.Shift.Z)
		}
		bins := ""
		if f.Shift.Binned {
			bins = "  (binned)"
		}
		fmt.Fprintf(b, "  %s %9.4f %+10.3f %7s%s\n", sanitize.Pad(f.Name, 24), f.Shift.JSD, f.Shift.EntropyChange, z, bins)
	}
}

func writeBroken(b *strings.Builder, r *Report) {
	if len(r.Broken) == 0 {
		b.WriteString("  No rule of the baseline broke.\n")
		return
	}
	b.WriteString("\n  Broken rules (held in the baseline, H(F|G) ≈ 0, and no longer do):\n")
	for i, br := range r.Broken {
		if i == textBroken {
			fmt.Fprintf(b, "  ... %d more in the JSON report\n", len(r.Broken)-i)
			break
		}
		fmt.Fprintf(b, "  %s given %s: %.3f → %.3f bits, %d records break it\n",
			sanitize.Fit(br.Target, 20), sanitize.Fit(br.Given, 20), br.BaselineBits, br.NowBits, br.Violations)
		for _, e := range br.Examples {
			tv := sanitize.Fit(e.TargetValue, 16)
			if e.TargetAbsent {
				tv = "(absent)"
			}
			fmt.Fprintf(b, "    %s=%s → %s (was %s) ×%d\n", sanitize.Fit(br.Given, 12), sanitize.Fit(e.GivenValue, 22),
				tv, sanitize.Fit(e.Expected, 14), e.Count)
		}
	}
}

func writeSurprising(b *strings.Builder, r *Report) {
	if len(r.Surprising) == 0 {
		return
	}
	against := "the window"
	if r.SurprisalAgainst == "baseline" {
		against = "the baseline"
	}
	fmt.Fprintf(b, "\nMost surprising records (bits of surprisal against %s):\n", against)
	for i, s := range r.Surprising {
		if i == textSurprising {
			fmt.Fprintf(b, "  ... %d more in the JSON report\n", len(r.Surprising)-i)
			break
		}
		var because []string
		for _, c := range s.Contributions {
			w := sanitize.Fit(c.Field, 16)
			if c.Broke != "" {
				w += " (breaks " + sanitize.Fit(c.Broke, 12) + "→" + w + ")"
			}
			because = append(because, w)
		}
		line := fmt.Sprintf("  line %d  %.1f bits", s.Line, s.Bits)
		if len(because) > 0 {
			line += ": " + strings.Join(because, ", ")
		}
		b.WriteString(sanitize.Fit(line, 79) + "\n")
		b.WriteString("    " + sanitize.Fit(recordText(s), 75) + "\n")
	}
}

// recordText lists a record's values, the "because" fields first.
func recordText(s Surprising) string {
	first := map[string]bool{}
	var keys []string
	for _, k := range s.Because {
		if _, ok := s.Record[k]; ok {
			keys = append(keys, k)
			first[k] = true
		}
	}
	var rest []string
	for k := range s.Record {
		if !first[k] {
			rest = append(rest, k)
		}
	}
	sort.Strings(rest)
	keys = append(keys, rest...)
	parts := make([]string, len(keys))
	for i, k := range keys {
		parts[i] = sanitize.String(k) + "=" + sanitize.String(s.Record[k])
	}
	return strings.Join(parts, " ")
}
