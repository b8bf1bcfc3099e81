package plan

import (
	"fmt"
	"io"
	"strings"

	"bitsift/sanitize"
)

// TextWidth is the widest line WriteText writes, in terminal cells.
const TextWidth = 80

// para writes s wrapped to the text width.
func para(b *strings.Builder, s string) {
	for _, line := range wrap(s, TextWidth-1) {
		b.WriteString(line + "\n")
	}
}

// WriteText writes the plan for a person, in 80 columns. Every value from
// the log is sanitised.
func WriteText(w io.Writer, p *Plan) error {
	b := &strings.Builder{}
	head := fmt.Sprintf("bitsift plan: %d records in the window, format %s", p.Records, sanitize.String(p.Format))
	m := p.Measured
	if m != nil {
		head += fmt.Sprintf("; measured on the last %d records, written as %s", m.Records, m.Serialised)
		if m.Skipped > 0 {
			head += fmt.Sprintf(" (%d sample lines not measurable)", m.Skipped)
		}
	}
	para(b, head)
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
	para(b, fmt.Sprintf("%s (--max-loss %g): drop %d, derive %d, keep %d of %d fields.",
		kind, p.MaxLoss, nd, nv, len(p.Fields)-nd-nv, len(p.Fields)))
	b.WriteString("\n")
	fmt.Fprintf(b, "%-18s %-7s %-14s %6s %6s %6s %6s %5s %4s\n",
		"FIELD", "ACTION", "FROM", "BITS", "HUFF", "LOST", "B/REC", "TABLE", "MISS")
	for _, f := range p.Fields {
		from := "-"
		if len(f.From) > 0 {
			from = strings.Join(f.From, ",")
		}
		action := string(f.Action)
		if f.Pin != Unpinned {
			action += "*"
		}
		fmt.Fprintf(b, "%s %-7s %s %6.3f %6.3f %6.3f %6.1f %5d %4d\n",
			sanitize.Pad(f.Name, 18), action, sanitize.Pad(from, 14), f.Entropy, f.Huffman, f.BitsLost,
			f.BytesPerRecord, f.TableEntries, f.Mismatches)
	}
	b.WriteString("\nBITS: H(F) over the window; HUFF: mean Huffman code length over the sample\n" +
		"(H ≤ HUFF < H+1); LOST: H(F|FROM), bits per record; TABLE: mapping table rows;\n" +
		"MISS: sample records whose value was not rebuilt; * pinned. Why each field\n" +
		"goes or stays: -o json (\"reason\").\n")
	if m != nil {
		s := m.Saved()
		fmt.Fprintf(b, "\nBytes per record       raw     zstd\n")
		fmt.Fprintf(b, "  before          %8.1f %8.1f\n", m.Before.Raw, m.Before.Compressed)
		fmt.Fprintf(b, "  after           %8.1f %8.1f  (tables and constants: %.2f raw, %.2f zstd)\n",
			m.After.Raw, m.After.Compressed, m.Tables.Raw, m.Tables.Compressed)
		fmt.Fprintf(b, "  saved           %8.1f %8.1f   (%.0f%% raw, %.0f%% zstd)\n",
			s.Raw, s.Compressed, pct(s.Raw, m.Before.Raw), pct(s.Compressed, m.Before.Compressed))
		if d, ok := p.SavedPerDay(); ok {
			para(b, fmt.Sprintf("Saved per day at %.4g records/s: %s raw, %s compressed.", p.RecordsPerSecond, Bytes(d.Raw), Bytes(d.Compressed)))
		} else {
			b.WriteString("Saved per day: unknown (the records carry no timestamps to give a rate).\n")
		}
		fmt.Fprintf(b, "Rebuilt on the sample: %d mismatches", m.Mismatches)
		if m.KeptChanged > 0 {
			fmt.Fprintf(b, "; %d records changed in kept fields (a bug: please report)", m.KeptChanged)
		}
		b.WriteString(".\n")
	} else {
		b.WriteString("\n")
		para(b, fmt.Sprintf("Estimated saving (field text only, not measured): %.1f bytes per record.", p.EstimatedSaving))
	}
	para(b, fmt.Sprintf("Entropy bound: %.2f bits (%.1f bytes) per record for the kept fields, %.2f for all.",
		p.EntropyAfter, p.EntropyAfter/8, p.EntropyBefore))
	para(b, fmt.Sprintf("Bits lost: at most %.3g per record (chain rule: the sum of H(F|FROM)).", p.BitsLost))
	for _, n := range p.Notes {
		para(b, "Note: "+sanitize.String(n))
	}
	writeReductionsText(b, p)
	b.WriteString("\n")
	para(b, Caution)
	if nv > 0 {
		para(b, RuleCaution)
	}
	if len(p.Reductions) > 0 {
		para(b, SamplingCaution)
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

// writeReductionsText writes the record reductions, one block each.
func writeReductionsText(b *strings.Builder, p *Plan) {
	if len(p.Reductions) == 0 {
		return
	}
	b.WriteString("\nRECORD REDUCTIONS (classes of routine records, over the measured records)\n")
	fmt.Fprintf(b, "%-3s %-8s %6s %6s %6s %9s %9s %8s %5s\n",
		"ID", "ACTION", "KEEP", "REC%", "BYTE%", "SAVED B", "ZSTD B", "LOST", "FIND")
	for _, r := range p.Reductions {
		keep := fmt.Sprintf("1/%.3g", r.KeepOneIn)
		mark := ""
		switch r.Pin {
		case PinKeep:
			mark = " (pinned: kept whole)"
		case PinDrop:
			mark = " (pinned)"
		}
		fmt.Fprintf(b, "%-3s %-8s %6s %5.1f%% %5.1f%% %9.1f %9.2f %8.3g %5d\n",
			r.ID, r.Action, keep, 100*r.ShareRecords, 100*r.ShareBytes, r.Saved.Raw, r.Saved.Compressed,
			r.BitsLostPerRecord, r.Findings)
		para(b, "    "+sanitize.String(r.Class)+mark)
		if w := r.Warning(); w != "" {
			para(b, "    ! "+w+": "+sanitize.String(strings.Join(r.FindingExamples, "; ")))
		}
	}
	b.WriteString("KEEP: records kept of the class; SAVED B, ZSTD B: bytes saved per stream\n" +
		"record, raw and zstd; LOST: bits lost per stream record; FIND: findings in\n" +
		"the class (broken rules, surprising records). A class with findings is left\n" +
		"out of --emit jq-records and otel-records unless pinned.\n")
	if d, ok := p.ReductionsPerDay(); ok {
		para(b, fmt.Sprintf("Saved per day by the reductions the exports carry: %s raw, %s compressed.", Bytes(d.Raw), Bytes(d.Compressed)))
	}
}

// ReductionsPerDay is what the applied reductions save per day at the
// observed record rate.
func (p *Plan) ReductionsPerDay() (Size, bool) {
	if p.RecordsPerSecond <= 0 {
		return Size{}, false
	}
	var s Size
	for i := range p.Reductions {
		if r := &p.Reductions[i]; r.Applied() {
			s.Raw += r.Saved.Raw
			s.Compressed += r.Saved.Compressed
		}
	}
	perDay := p.RecordsPerSecond * 86400
	return Size{s.Raw * perDay, s.Compressed * perDay}, true
}
