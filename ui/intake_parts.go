package ui

import (
	"fmt"

	"bitsift/parse"
	"bitsift/sanitize"
)

// partLines is the Input screen's table of a partitioned source's
// partitions (a Kafka topic): where each is read to, its log's end, the
// lag between them and the records read. Nothing for files.
func partLines(e *env, parts []parse.PartStatus, w int) []string {
	if len(parts) == 0 {
		return nil
	}
	st := e.st
	var lag int64
	for _, p := range parts {
		lag += max(p.Lag, 0)
	}
	out := []string{"", st.Title.Render(fmt.Sprintf("PARTITIONS  %d · lag %s", len(parts), count(lag))),
		st.Header.Render(fmt.Sprintf("  %-22s %12s %12s %10s %10s", "PARTITION", "READ TO", "LOG END", "LAG", "RECORDS"))}
	for _, p := range parts {
		end, lagText := count(p.End), count(p.Lag)
		if p.End < 0 {
			end = "?"
		}
		if p.Lag < 0 {
			lagText = "?"
		}
		row := fmt.Sprintf("  %-22s %12s %12s %10s %10s", sanitize.Fit(p.Name, 22), count(p.Position), end, lagText, count(p.Records))
		if p.Lag > 0 {
			row = st.Warn.Render(row)
		}
		out = append(out, ansiFit(row, w))
	}
	return out
}
