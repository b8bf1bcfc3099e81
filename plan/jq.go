package plan

import (
	"fmt"
	"io"
	"sort"
	"strings"

	"bitsift/sanitize"
)

// jqHelpers are the functions both jq programs share. bs_del and bs_set
// leave a record whose path runs through a value that is not an object as
// it was, where jq itself would stop with an error.
const jqHelpers = `def bs_at($p): try getpath($p) catch null;
def bs_del($p): . as $x | try delpaths([$p]) catch $x;
def bs_set($p; $v): . as $x | try setpath($p; $v) catch $x;
`

// prunePaths lists the objects that hold dropped keys, deepest first: the
// drop program deletes each that the drop emptied (not one that was empty
// in the record), so no "x":{} is left behind.
func prunePaths(ps [][]string) [][]string {
	seen := map[string]bool{}
	var out [][]string
	for _, p := range ps {
		for n := len(p) - 1; n >= 1; n-- {
			k := strings.Join(p[:n], "\x00")
			if !seen[k] {
				seen[k] = true
				out = append(out, p[:n])
			}
		}
	}
	sort.SliceStable(out, func(a, b int) bool { return len(out[a]) > len(out[b]) })
	return out
}

// jqArray writes a path as a jq array of strings: ["http","status"].
func jqArray(path []string) string {
	b := []byte{'['}
	for i, seg := range path {
		if i > 0 {
			b = append(b, ',')
		}
		b = appendJSONString(b, seg)
	}
	return string(append(b, ']'))
}

// WriteJQ writes a jq program that applies the plan's deletions to JSON
// lines: jq -c -f plan.jq < in.jsonl > out.jsonl.
func WriteJQ(w io.Writer, p *Plan) error {
	var b strings.Builder
	p.comment(&b)
	b.WriteString("# Use: jq -c -f THIS_FILE < in.jsonl > out.jsonl\n")
	ps := p.paths()
	if len(ps) == 0 {
		b.WriteString("# Nothing to delete.\n.\n")
	} else {
		exprs := make([]string, len(ps))
		for i, path := range ps {
			exprs[i] = jqPath(path)
		}
		prune := prunePaths(ps)
		if len(prune) > 0 {
			b.WriteString(jqHelpers + ". as $in\n| ")
		}
		b.WriteString("del(" + strings.Join(exprs, ", ") + ")\n")
		for _, pp := range prune {
			// An object the deletions emptied goes too: restore brings it
			// back with the first member it rebuilds.
			fmt.Fprintf(&b, "| if bs_at(%s) == {} and (($in | bs_at(%[1]s)) | type == \"object\" and length > 0) then bs_del(%[1]s) else . end\n", jqArray(pp))
		}
	}
	_, err := io.WriteString(w, b.String())
	return err
}

// jqValue writes a table value as a jq literal: JSON text is one (a JSON
// string holds no "\(", the only escape jq reads otherwise).
func jqValue(v TableValue, raw bool) string {
	if raw {
		return v.Text
	}
	return string(appendJSONString(nil, v.Text))
}

// WriteJQRestore writes a jq program that rebuilds, on lines the WriteJQ
// program wrote, every dropped constant and exactly derived field from the
// tables it embeds, in the key order the measured records had, so that
// restore(drop(x)) == x. Fields dropped with loss are not rebuilt: a guess
// would read as data. It needs a measured plan of JSON input.
func WriteJQRestore(w io.Writer, p *Plan) error {
	if p.Measured == nil || p.Measured.Serialised != "json" {
		return fmt.Errorf("plan: a restore program needs a plan measured on JSON lines")
	}
	var b strings.Builder
	p.comment(&b)
	b.WriteString("# Restore: rebuilds what the drop program (--emit jq) deleted.\n" +
		"# Use: jq -c -n -f THIS_FILE < dropped.jsonl > restored.jsonl\n" +
		"# (-n: the tables are read once, then each input line is restored)\n")
	rs, parents := restorables(p, p.Measured.Paths)
	rebuilt := map[string]bool{}
	for _, r := range rs {
		rebuilt[r.f.Name] = true
	}
	for _, f := range p.Fields {
		if f.Dropped() && !rebuilt[f.Name] {
			fmt.Fprintf(&b, "# %s: not rebuilt (dropped with loss, or under more than one key path)\n", sanitize.String(f.Name))
		}
	}
	b.WriteString(jqHelpers)
	b.WriteString(`def bs_has($p): ($p | length) == 0 or (try (getpath($p[:-1]) | type == "object" and has($p[-1])) catch false);
def bs_key($p): if bs_has($p) then (getpath($p) | tojson) else "absent" end;
def bs_table(rows): reduce rows[] as $r ({}; .[if $r[0] then ($r[1] | tojson) else "absent" end] = $r);
def bs_order($keys):
  (reduce range(0; $keys | length) as $i ({}; .[$keys[$i]] = $i)) as $rk
  | [foreach to_entries[] as $e ({r: -1, i: -1}; .i += 1 | .r = ($rk[$e.key] // .r); {k: [.r, .i], e: $e})]
  | sort_by(.k) | reduce .[] as $x ({}; .[$x.e.key] = $x.e.value);
def bs_order_at($p; $keys):
  if ($p | length) == 0 then bs_order($keys)
  elif (bs_at($p) | type) == "object" then setpath($p; getpath($p) | bs_order($keys))
  else . end;
`)
	for i, r := range rs {
		if r.from == nil {
			continue
		}
		fmt.Fprintf(&b, "def bs_t%d: bs_table([", i)
		for j, row := range r.f.Table.Rows {
			if j > 0 {
				b.WriteString(",")
			}
			if j%4 == 0 {
				b.WriteString("\n  ")
			}
			fv, v := row.From[0], row.Value
			fmt.Fprintf(&b, "[%t,%s,%t,%s]", !fv.Absent, lit(fv, r.f.Table.JSON), !v.Absent, lit(v, r.f.Table.JSON))
		}
		b.WriteString("]);\n")
	}
	for i, r := range rs {
		if r.from != nil {
			fmt.Fprintf(&b, "bs_t%d as $t%[1]d |\n", i)
		}
	}
	b.WriteString("inputs\n")
	for i, r := range rs {
		if r.from == nil {
			fmt.Fprintf(&b, "| bs_set(%s; %s)\n", jqArray(r.path), lit(r.f.Table.Rows[0].Value, r.f.Table.JSON))
			continue
		}
		fmt.Fprintf(&b, "| $t%d[bs_key(%s)] as $r | if $r and $r[2] then bs_set(%s; $r[3]) else . end\n",
			i, jqArray(r.from), jqArray(r.path))
	}
	for _, pp := range parents {
		if keys, ok := p.Measured.Orders[strings.Join(pp, "\x00")]; ok {
			fmt.Fprintf(&b, "| bs_order_at(%s; %s)\n", jqArray(pp), jqArray(keys))
		}
	}
	_, err := io.WriteString(w, b.String())
	return err
}

func lit(v TableValue, raw bool) string {
	if v.Absent {
		return "null"
	}
	return jqValue(v, raw)
}
