package plan

import (
	"encoding/json"
	"fmt"
	"io"
	"regexp"
	"strings"

	"bitsift/sanitize"
)

// ottlNumber is a number OTTL reads as an int or float literal as we
// remember its grammar (digits, an optional fraction; no exponent).
var ottlNumber = regexp.MustCompile(`^-?[0-9]+(\.[0-9]+)?$`)

// ottlPath writes a term's attribute path: attributes["http"]["status"].
func ottlPath(t ClassTerm) (string, bool) {
	path := t.Path
	if path == nil {
		path = []string{t.Field}
	}
	s := "attributes"
	for _, seg := range path {
		if !ottlSafe(seg) {
			return "", false
		}
		s += `["` + seg + `"]`
	}
	return s, true
}

// ottlLiteral writes a value as an OTTL literal; ok is false for a value
// it cannot say safely (an array, an object, a string with a quote or a
// backslash or a control character, a number with an exponent). Input
// other than JSON gives string attributes.
func ottlLiteral(v TableValue, raw bool) (string, bool) {
	switch {
	case v.Absent:
		return "nil", true
	case !raw:
		return `"` + v.Text + `"`, ottlSafe(v.Text) || v.Text == ""
	case v.Text == "true" || v.Text == "false":
		return v.Text, true
	case v.Text == "null":
		return "nil", true
	case ottlNumber.MatchString(v.Text):
		return v.Text, true
	case strings.HasPrefix(v.Text, `"`):
		var s string
		if json.Unmarshal([]byte(v.Text), &s) != nil || !(ottlSafe(s) || s == "") {
			return "", false
		}
		return `"` + s + `"`, true
	}
	return "", false
}

// Condition is the class as an OTTL condition on log record attributes:
// attributes["route"] == "/healthz". It is "" for a collapse (every
// record is looked at) and for a class OTTL cannot say safely.
func (r *Reduction) Condition() string {
	if r.Action != SampleRecords {
		return ""
	}
	parts := make([]string, len(r.Terms))
	for i, t := range r.Terms {
		path, ok1 := ottlPath(t)
		if t.Template != "" {
			re, ok2 := templateRegexp(t.Template)
			if !ok1 || !ok2 {
				return ""
			}
			parts[i] = `IsMatch(` + path + `, "` + re + `")`
			continue
		}
		lit, ok2 := ottlLiteral(t.Value, t.JSON)
		if !ok1 || !ok2 {
			return ""
		}
		parts[i] = path + " == " + lit
	}
	return strings.Join(parts, " and ")
}

// recordsComment writes the header of the record exports.
func recordsComment(b *strings.Builder, p *Plan) {
	fmt.Fprintf(b, "# bitsift record reductions (%s): classes of routine records.\n", Schema)
	for _, r := range p.Reductions {
		state := "in this program"
		if !r.Applied() {
			state = "left out"
		}
		fmt.Fprintf(b, "# %s %s, %s: %s (%.1f%% of records, %.1f%% of bytes; %d findings)\n",
			r.ID, r.Action, state, sanitize.String(r.Class), 100*r.ShareRecords, 100*r.ShareBytes, r.Findings)
		if w := r.Warning(); w != "" {
			fmt.Fprintf(b, "#    ! %s\n", w)
		}
	}
	for _, line := range wrap(SamplingCaution, 76) {
		b.WriteString("# " + line + "\n")
	}
}

func yamlQuote(s string) string { return "'" + strings.ReplaceAll(s, "'", "''") + "'" }

// WriteOTelRecords writes OpenTelemetry Collector configuration for the
// applied reductions: a routing connector sends each sampled class (its
// OTTL condition) to a pipeline of its own with a probabilistic sampler;
// the rest goes through the log deduplication processor when a collapse
// is applied. Receivers and exporters are the user's: the ones named are
// placeholders. Component names and keys as we remember the collector's
// contrib documentation (routing connector, probabilistic_sampler,
// logdedup).
func WriteOTelRecords(w io.Writer, p *Plan) error {
	var b strings.Builder
	recordsComment(&b, p)
	b.WriteString("# Assumes the fields are log record attributes, as a parser operator in the\n" +
		"# receiver leaves them. Replace the placeholders filelog and otlp with your\n" +
		"# receivers and exporters.\n")
	var sampled []*Reduction
	var collapse *Reduction
	for i := range p.Reductions {
		r := &p.Reductions[i]
		if !r.Applied() {
			continue
		}
		if r.Action == CollapseRecords {
			collapse = r
			continue
		}
		if r.Condition() == "" {
			fmt.Fprintf(&b, "# %s left out: OTTL cannot say its class safely\n", r.ID)
			continue
		}
		sampled = append(sampled, r)
	}
	if len(sampled) > 0 {
		b.WriteString("connectors:\n  routing/bitsift:\n    default_pipelines: [logs/bitsift_rest]\n    error_mode: ignore\n    table:\n")
		for _, r := range sampled {
			fmt.Fprintf(&b, "      - context: log\n        condition: %s\n        pipelines: [logs/bitsift_%s]\n", yamlQuote(r.Condition()), r.ID)
		}
	}
	b.WriteString("processors:\n")
	if len(sampled) == 0 && collapse == nil {
		b.WriteString("  {}\n")
	}
	for _, r := range sampled {
		fmt.Fprintf(&b, "  probabilistic_sampler/bitsift_%s:\n    sampling_percentage: %s\n", r.ID, percentOf(r.KeepOneIn))
		if id := p.hints.idField; id != "" && ottlSafe(id) {
			fmt.Fprintf(&b, "    attribute_source: record\n    from_attribute: %s\n", yamlQuote(id))
		}
	}
	if collapse != nil {
		fmt.Fprintf(&b, "  logdedup/bitsift_%s:\n    interval: 60s\n    log_count_attribute: bitsift_count\n", collapse.ID)
		if len(collapse.Ignore) > 0 {
			b.WriteString("    exclude_fields:\n")
			for _, f := range collapse.Ignore {
				fmt.Fprintf(&b, "      - %s\n", yamlQuote("attributes."+f))
			}
		}
	}
	b.WriteString("service:\n  pipelines:\n")
	rest := "    logs/bitsift_rest:\n"
	if len(sampled) > 0 {
		b.WriteString("    logs/bitsift_in:\n      receivers: [filelog]\n      exporters: [routing/bitsift]\n")
		for _, r := range sampled {
			fmt.Fprintf(&b, "    logs/bitsift_%s:\n      receivers: [routing/bitsift]\n      processors: [probabilistic_sampler/bitsift_%[1]s]\n      exporters: [otlp]\n", r.ID)
		}
		rest += "      receivers: [routing/bitsift]\n"
	} else {
		rest += "      receivers: [filelog]\n"
	}
	if collapse != nil {
		rest += "      processors: [logdedup/bitsift_" + collapse.ID + "]\n"
	}
	b.WriteString(rest + "      exporters: [otlp]\n")
	_, err := io.WriteString(w, b.String())
	return err
}

func percentOf(keepOneIn float64) string {
	return strings.TrimRight(strings.TrimRight(fmt.Sprintf("%.4f", 100/keepOneIn), "0"), ".")
}

// jqCond writes a class as a jq condition on a record.
func jqCond(r *Reduction) string {
	parts := make([]string, len(r.Terms))
	for i, t := range r.Terms {
		path := t.Path
		if path == nil {
			path = []string{t.Field}
		}
		if re, ok := templateRegexp(t.Template); t.Template != "" && ok {
			parts[i] = "((bs_at(" + jqArray(path) + ") | type == \"string\") and (bs_at(" + jqArray(path) + ") | test(\"" + re + "\")))"
		} else if t.Template != "" {
			parts[i] = "false"
		} else if t.Value.Absent {
			parts[i] = "(bs_has(" + jqArray(path) + ") | not)"
		} else {
			parts[i] = "(bs_has(" + jqArray(path) + ") and bs_at(" + jqArray(path) + ") == " + jqValue(t.Value, t.JSON) + ")"
		}
	}
	return strings.Join(parts, " and ")
}

// WriteJQRecords writes a jq filter for the applied reductions, run with
// jq -c -n -f: it keeps the first of every N records of a sampled class,
// and of records that repeat in all but the time and identifier fields
// within a minute (the time field's first 16 characters, an ISO 8601
// minute; every 1,000 records without one) keeps the first, with the
// count in bitsift_count, written when its minute ends.
func WriteJQRecords(w io.Writer, p *Plan) error {
	var b strings.Builder
	recordsComment(&b, p)
	b.WriteString("# Use: jq -c -n -f THIS_FILE < in.jsonl > out.jsonl\n")
	b.WriteString(jqHelpers)
	b.WriteString(`def bs_has($p): ($p | length) == 0 or (try (getpath($p[:-1]) | type == "object" and has($p[-1])) catch false);
`)
	var arms []string
	var collapse *Reduction
	for i := range p.Reductions {
		r := &p.Reductions[i]
		if !r.Applied() {
			continue
		}
		if r.Action == CollapseRecords {
			collapse = r
			continue
		}
		arms = append(arms, fmt.Sprintf("%s then {id: %q, n: %d}", jqCond(r), r.ID, int(r.KeepOneIn)))
	}
	if len(arms) == 0 {
		b.WriteString("def bs_class: null;\n")
	} else {
		b.WriteString("def bs_class:\n  if " + strings.Join(arms, "\n  elif ") + "\n  else null end;\n")
	}
	minute := `(.seen / 1000 | floor)`
	if tf := p.hints.timeField; tf != "" {
		minute = `($r | bs_at(` + jqArray([]string{tf}) + `) | tostring | .[0:16])`
	}
	var ign []string
	if collapse != nil {
		for _, f := range collapse.Ignore {
			ign = append(ign, "bs_del("+jqArray([]string{f})+")")
		}
	}
	dropKey := "."
	if len(ign) > 0 {
		dropKey = strings.Join(ign, " | ")
	}
	fmt.Fprintf(&b, `def bs_flush: [.groups[] | if .count > 1 then .rec + {bitsift_count: .count} else .rec end];
foreach (inputs, null) as $r ({n: {}, groups: {}, minute: null, seen: 0, emit: []};
  .emit = []
  | if $r == null then .emit = bs_flush | .groups = {}
    else .seen += 1 | ($r | bs_class) as $c
    | if $c != null then
        .n[$c.id] += 1 | if ((.n[$c.id] - 1) %% $c.n) == 0 then .emit = [$r] else . end
      elif %t then
        %s as $m
        | (if $m != .minute then .emit = bs_flush | .groups = {} | .minute = $m else . end)
        | ($r | %s | tojson) as $k
        | if .groups[$k] then .groups[$k].count += 1 else .groups[$k] = {rec: $r, count: 1} end
      else .emit = [$r] end
    end;
  .emit[])
`, collapse != nil, minute, dropKey)
	_, err := io.WriteString(w, b.String())
	return err
}

// maskRE finds the masks in a template: <*>, <num>, <ip>, ... and the
// "<…>" that ends a cut one.
var maskRE = regexp.MustCompile(`<[a-z*…]+>`)

// templateRegexp writes a template as a regular expression that both RE2
// (the collector's IsMatch, from memory) and Oniguruma (jq's test) read
// alike: anchored, a mask matches (part of) one word and the "<…>" of a
// cut template the rest, spaces match runs of spaces,
// and every other character stands for itself, a special one inside
// brackets ([.]) so that no backslash is needed (OTTL's string escapes
// are not certain). ok is false for a template with a character that
// cannot be written so (a backslash, a quote, ^ or ], a control
// character).
func templateRegexp(t string) (string, bool) {
	var b strings.Builder
	b.WriteString("^")
	rest := t
	for rest != "" {
		loc := maskRE.FindStringIndex(rest)
		lit := rest
		if loc != nil {
			lit = rest[:loc[0]]
		}
		for _, r := range lit {
			switch {
			case r == '\\' || r == '"' || r == '^' || r == ']' || r < 0x20 || r == 0x7f:
				return "", false
			case r == ' ':
				b.WriteString(" +")
			case strings.ContainsRune(".+*?()[{}|$", r):
				b.WriteString("[" + string(r) + "]")
			default:
				b.WriteRune(r)
			}
		}
		if loc == nil {
			break
		}
		if rest[loc[0]:loc[1]] == "<…>" { // the words past a cut template
			b.WriteString(".*")
		} else { // a mask stands for (part of) one word
			b.WriteString("[^ ]+")
		}
		rest = rest[loc[1]:]
	}
	b.WriteString("$")
	return b.String(), true
}
