package parse

import (
	"fmt"
	"regexp"
)

// Pattern reads lines with a Go regular expression given by --pattern:
// each named group that takes part in the match is a field. It is not
// registered for detection; --pattern selects it.
type Pattern struct {
	re    *regexp.Regexp
	names []string // group names by group index; "" for unnamed groups
	loc   []int
}

// Clone implements Cloner: the compiled expression is shared (a Regexp is
// safe for concurrent use), the match buffer is not.
func (p *Pattern) Clone() Format { return &Pattern{re: p.re, names: p.names} }

// NewPattern compiles expr, which must have at least one named group
// ((?P<name>...) or (?<name>...)).
func NewPattern(expr string) (*Pattern, error) {
	re, err := regexp.Compile(expr)
	if err != nil {
		return nil, fmt.Errorf("parse: --pattern: %w", err)
	}
	p := &Pattern{re: re, names: re.SubexpNames()}
	named := 0
	for _, n := range p.names {
		if n != "" {
			named++
		}
	}
	if named == 0 {
		return nil, fmt.Errorf("parse: --pattern %q has no named group: write (?P<name>...) for each field", expr)
	}
	return p, nil
}

// Name implements Format.
func (*Pattern) Name() string { return "pattern" }

// Sniff implements Format: 1 for a line the expression matches.
func (p *Pattern) Sniff(line []byte) float64 {
	if p.re.Match(line) {
		return 1
	}
	return 0
}

// Parse implements Format.
func (p *Pattern) Parse(line []byte, rec *Record) error {
	p.loc = p.re.FindSubmatchIndex(line)
	if p.loc == nil {
		return reject("line does not match --pattern")
	}
	for g := 1; g < len(p.names); g++ {
		if p.names[g] == "" || p.loc[2*g] < 0 {
			continue
		}
		rec.AddKV(p.names[g], line[p.loc[2*g]:p.loc[2*g+1]])
	}
	return nil
}
