package report

import (
	"strings"

	"bitsift/sanitize"
)

// Narrow says how a report's stream was narrowed: the --where conditions
// as given, and --since/--until (RFC 3339).
type Narrow struct {
	Where []string `json:"where,omitempty"`
	Since string   `json:"since,omitempty"`
	Until string   `json:"until,omitempty"`
	// By is the field of --by, on the whole report; Value, on a group's.
	By string `json:"by,omitempty"`
}

// String says it in a few words.
func (n *Narrow) String() string {
	if n == nil {
		return "the filter"
	}
	var parts []string
	for _, w := range n.Where {
		parts = append(parts, "--where "+sanitize.String(w))
	}
	if n.Since != "" {
		parts = append(parts, "--since "+n.Since)
	}
	if n.Until != "" {
		parts = append(parts, "--until "+n.Until)
	}
	if len(parts) == 0 {
		return "the filter"
	}
	return strings.Join(parts, " ")
}
