package plan

import (
	"fmt"
	"io"
	"regexp"
	"strings"
	"unicode"

	"bitsift/sanitize"
)

// paths returns the key paths under which each dropped field was written:
// the sample's paths for JSON input, else the flat key.
func (p *Plan) paths() [][]string {
	var out [][]string
	for _, name := range p.DroppedNames() {
		if p.Measured != nil && len(p.Measured.Paths[name]) > 0 {
			out = append(out, p.Measured.Paths[name]...)
			continue
		}
		out = append(out, []string{name})
	}
	return out
}

// comment writes the header both exports share, every line starting with
// "# ". Field names come from logs: they are sanitised, so none can end
// the comment line.
func (p *Plan) comment(w *strings.Builder) {
	fmt.Fprintf(w, "# bitsift drop plan (%s): %d fields deleted, ", Schema, len(p.DroppedNames()))
	if p.Lossless {
		w.WriteString("lossless.\n")
	} else {
		fmt.Fprintf(w, "losing at most %.3g bits per record.\n", p.BitsLost)
	}
	for _, f := range p.Fields {
		switch {
		case f.Action == Derive:
			fmt.Fprintf(w, "# %s: rebuild from %s with the plan's mapping table\n",
				sanitize.String(f.Name), sanitize.String(strings.Join(f.From, ", ")))
		case f.Action == Drop && f.Exact:
			fmt.Fprintf(w, "# %s: constant %q\n", sanitize.String(f.Name), sanitize.Fit(f.Value, 60))
		case f.Action == Drop:
			fmt.Fprintf(w, "# %s: dropped, %.3g bits per record lost\n", sanitize.String(f.Name), f.BitsLost)
		}
	}
	for _, line := range wrap(Caution, 76) {
		w.WriteString("# " + line + "\n")
	}
}

func wrap(s string, width int) []string {
	var lines []string
	cur := ""
	for _, word := range strings.Fields(s) {
		if cur != "" && len(cur)+1+len(word) > width {
			lines = append(lines, cur)
			cur = ""
		}
		if cur != "" {
			cur += " "
		}
		cur += word
	}
	return append(lines, cur)
}

var jqIdent = regexp.MustCompile(`^[A-Za-z_][A-Za-z0-9_]*$`)

// jqKeywords may not follow a dot unquoted in older jq versions.
var jqKeywords = map[string]bool{"and": true, "or": true, "not": true, "if": true, "then": true,
	"elif": true, "else": true, "end": true, "as": true, "def": true, "reduce": true, "foreach": true,
	"try": true, "catch": true, "label": true, "import": true, "include": true, "__loc__": true,
	"true": true, "false": true, "null": true}

// jqPath writes a path as jq syntax: .http.status for nested keys,
// ."id.orig_h" for a key with a dot (or anything but letters, digits and _).
func jqPath(path []string) string {
	var b []byte
	for _, seg := range path {
		b = append(b, '.')
		if jqIdent.MatchString(seg) && !jqKeywords[seg] {
			b = append(b, seg...)
		} else {
			b = appendJSONString(b, seg)
		}
	}
	return string(b)
}

// ottlSafe says whether a key can be written in an OTTL string literal and
// a single-quoted YAML scalar without any escape we are unsure of.
func ottlSafe(s string) bool {
	for _, r := range s {
		if !unicode.IsPrint(r) || r == '"' || r == '\\' {
			return false
		}
	}
	return s != ""
}

// WriteOTel writes an OpenTelemetry Collector transform processor that
// deletes the plan's fields from log record attributes (OTTL delete_key). A
// nested JSON key is deleted from its map: attributes["http"], "status".
func WriteOTel(w io.Writer, p *Plan) error {
	var b strings.Builder
	p.comment(&b)
	b.WriteString("# Assumes the fields are log record attributes, as a JSON parser operator\n" +
		"# in the collector's receiver leaves them. Add the processor to the logs pipeline.\n")
	b.WriteString("processors:\n  transform/bitsift_drop:\n    error_mode: ignore\n    log_statements:\n" +
		"      - context: log\n        statements:\n")
	n := 0
	for _, path := range p.paths() {
		ok := true
		for _, seg := range path {
			ok = ok && ottlSafe(seg)
		}
		if !ok {
			fmt.Fprintf(&b, "          # left out, delete by hand: %s (a name OTTL cannot quote safely)\n",
				sanitize.String(strings.Join(path, ".")))
			continue
		}
		target := "attributes"
		for _, seg := range path[:len(path)-1] {
			target += `["` + seg + `"]`
		}
		stmt := fmt.Sprintf(`delete_key(%s, "%s")`, target, path[len(path)-1])
		fmt.Fprintf(&b, "          - '%s'\n", strings.ReplaceAll(stmt, "'", "''"))
		n++
	}
	if n == 0 {
		b.WriteString("          []\n")
	}
	_, err := io.WriteString(w, b.String())
	return err
}
