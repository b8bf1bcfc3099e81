package cli

import (
	"fmt"
	"strings"

	"bitsift/kafka"
	"bitsift/profile"
)

// missingError is merge's answer to gaps in a topic's offsets: the report
// was printed with them; the exit code says the input was partial.
func missingError(p *profile.Profile) error {
	var gaps []string
	for _, f := range p.Faults {
		if strings.HasPrefix(f, kafka.MissingPrefix) {
			gaps = append(gaps, strings.TrimPrefix(f, kafka.MissingPrefix))
		}
	}
	if len(gaps) == 0 {
		return nil
	}
	return &ExitError{Code: ExitPartial, Err: fmt.Errorf("missing data: %s", strings.Join(gaps, "; "))}
}
