package plan

import (
	"fmt"
	"io"
	"strings"

	"bitsift/sanitize"
)

// WriteText writes the plan for a person, readable at 100 columns. Every
// value from the log is sanitised.
func WriteText(w io.Writer, p *Plan) error {
	b := &strings.Builder{}
	fmt.Fprintf(b, "bitsift plan: %d records in the window, format %s", p.Records, sanitize.String(p.Format))
	m := p.Measured
	if m != nil {
		fmt.Fprintf(b, "; measured on the last %d records, written as %s", m.Records, m.Serialised)
		if m.Skipped > 0 {
			fmt.Fprintf(b, " (%d sample lines not measurable)", m.Skipped)
		}
	}
	b.WriteString("\n")
	kind := "Lossless plan"
	if !p.Lossless {
		kind = fmt.Sprintf("Lossy plan, at most %.3g bits lost per record", p.BitsLost)
	}
	if m == nil {
		kind += ", not verified on records"
	}
	var nd, nv int
	for _, f := range p.Fields {
		switch f.Action {
		case Drop:
			nd++
		case Derive:
			nv++
		}
	}
	fmt.Fprintf(b, "%s (--max-loss %g): drop %d, derive %d, keep %d of %d fields.\n\n",
		kind, p.MaxLoss, nd, nv, len(p.Fields)-nd-nv, len(p.Fields))
	fmt.Fprintf(b, "%-18s %-6s %-14s %6s %6s %6s %6s %5s %5s  %s\n",
		"FIELD", "ACTION", "FROM", "BITS", "HUFF", "LOST", "B/REC", "TABLE", "MISS", "WHY")
	for _, f := range p.Fields {
		from := "-"
		if len(f.From) > 0 {
			from = strings.Join(f.From, ",")
		}
		action := string(f.Action)
		if f.Pin != Unpinned {
			action += "*"
		}
		fmt.Fprintf(b, "%s %-6s %s %6.3f %6.3f %6.3f %6.1f %5d %5d  %s\n",
			sanitize.Pad(f.Name, 18), action, sanitize.Pad(from, 14), f.Entropy, f.Huffman, f.BitsLost,
			f.BytesPerRecord, f.TableEntries, f.Mismatches, sanitize.String(f.Reason))
	}
	b.WriteString("\nBITS: H(F) over the window; HUFF: mean Huffman code length over the sample\n" +
		"(H ≤ HUFF < H+1); LOST: H(F|FROM), bits per record; TABLE: mapping table rows;\n" +
		"MISS: sample records whose value was not rebuilt; * pinned.\n")
	if m != nil {
		s := m.Saved()
		fmt.Fprintf(b, "\nBytes per record       raw     zstd\n")
		fmt.Fprintf(b, "  before          %8.1f %8.1f\n", m.Before.Raw, m.Before.Compressed)
		fmt.Fprintf(b, "  after           %8.1f %8.1f   (tables and constants: %.2f raw, %.2f zstd)\n",
			m.After.Raw, m.After.Compressed, m.Tables.Raw, m.Tables.Compressed)
		fmt.Fprintf(b, "  saved           %8.1f %8.1f   (%.0f%% raw, %.0f%% zstd)\n",
			s.Raw, s.Compressed, pct(s.Raw, m.Before.Raw), pct(s.Compressed, m.Before.Compressed))
		if d, ok := p.SavedPerDay(); ok {
			fmt.Fprintf(b, "Saved per day at %.4g records/s: %s raw, %s compressed.\n", p.RecordsPerSecond, Bytes(d.Raw), Bytes(d.Compressed))
		} else {
			b.WriteString("Saved per day: unknown (the records carry no timestamps to give a rate).\n")
		}
		fmt.Fprintf(b, "Rebuilt on the sample: %d mismatches", m.Mismatches)
		if m.KeptChanged > 0 {
			fmt.Fprintf(b, "; %d records changed in kept fields (a bug: please report)", m.KeptChanged)
		}
		b.WriteString(".\n")
	} else {
		fmt.Fprintf(b, "\nEstimated saving (field text only, not measured): %.1f bytes per record.\n", p.EstimatedSaving)
	}
	fmt.Fprintf(b, "Entropy bound: %.2f bits (%.1f bytes) per record for the kept fields, %.2f for all.\n",
		p.EntropyAfter, p.EntropyAfter/8, p.EntropyBefore)
	fmt.Fprintf(b, "Bits lost: at most %.3g per record (chain rule: the sum of H(F|FROM)).\n", p.BitsLost)
	for _, n := range p.Notes {
		fmt.Fprintf(b, "Note: %s\n", sanitize.String(n))
	}
	b.WriteString("\n")
	for _, line := range wrap(Caution, 90) {
		b.WriteString(line + "\n")
	}
	if nv > 0 {
		for _, line := range wrap(RuleCaution, 90) {
			b.WriteString(line + "\n")
		}
	}
	_, err := io.WriteString(w, b.String())
	return err
}

func pct(part, whole float64) float64 {
	if whole == 0 {
		return 0
	}
	return 100 * part / whole
}

// Bytes formats a byte count with a decimal unit (kB = 1000 bytes).
func Bytes(n float64) string {
	units := []string{"B", "kB", "MB", "GB", "TB", "PB"}
	i := 0
	neg := n < 0
	if neg {
		n = -n
	}
	for n >= 1000 && i < len(units)-1 {
		n /= 1000
		i++
	}
	s := fmt.Sprintf("%.3g %s", n, units[i])
	if neg {
		s = "-" + s
	}
	return s
}
