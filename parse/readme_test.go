package parse

import (
	"bytes"
	"os"
	"strings"
	"testing"
)

// The README's Formats section shows one example line per format: each
// must parse with its format, and detect as it.
func TestREADMEExamples(t *testing.T) {
	b, err := os.ReadFile("../README.md")
	if err != nil {
		t.Skipf("README.md: %v", err)
	}
	_, sec, _ := bytes.Cut(b, []byte("## Formats\n"))
	_, block, _ := bytes.Cut(sec, []byte("```\n"))
	block, _, _ = bytes.Cut(block, []byte("```\n"))
	seen := map[string]bool{}
	for _, l := range strings.Split(strings.TrimSpace(string(block)), "\n") {
		name, line, _ := strings.Cut(l, " ")
		line = strings.TrimLeft(line, " ")
		seen[name] = true
		t.Run(name, func(t *testing.T) {
			var f Format
			if name == "pattern" {
				line, expr, _ := strings.Cut(line, "      with --pattern ")
				p, err := NewPattern(strings.Trim(expr, "'"))
				if err != nil {
					t.Fatal(err)
				}
				var rec Record
				if err := p.Parse([]byte(line), &rec); err != nil || rec.Len() != 4 {
					t.Fatalf("%q: %v, %v", line, err, fieldsOf(&rec))
				}
				return
			}
			d, err := Detect([][]byte{[]byte(line)})
			if err != nil || d.Format.Name() != name {
				t.Fatalf("%q detects as %v (%v)", line, d.Format, err)
			}
			f = d.Format
			var rec Record
			if err := f.Parse([]byte(line), &rec); err != nil {
				t.Fatalf("%q: %v", line, err)
			}
		})
	}
	for _, n := range append(Names(), "pattern") {
		if !seen[n] {
			t.Errorf("README has no example line for %s", n)
		}
	}
}

// The README's --pattern examples for shapes the header format does not
// read each parse the example line above them, every group taking part.
func TestREADMEPatterns(t *testing.T) {
	b, err := os.ReadFile("../README.md")
	if err != nil {
		t.Skipf("README.md: %v", err)
	}
	_, sec, _ := bytes.Cut(b, []byte("When a shape is not read, give it with `--pattern`"))
	_, block, _ := bytes.Cut(sec, []byte("```\n"))
	block, _, _ = bytes.Cut(block, []byte("```\n"))
	lines := strings.Split(strings.TrimSpace(string(block)), "\n")
	if len(lines) != 6 {
		t.Fatalf("want three examples, got %q", lines)
	}
	for i := 0; i < 6; i += 2 {
		example := strings.TrimPrefix(lines[i], "# ")
		example, _, _ = strings.Cut(example, "  (")
		example = strings.TrimSpace(example)
		_, expr, _ := strings.Cut(lines[i+1], "--pattern '")
		expr, _, _ = strings.Cut(expr, "' ")
		p, err := NewPattern(expr)
		if err != nil {
			t.Fatal(err)
		}
		var rec Record
		if err := p.Parse([]byte(example), &rec); err != nil || rec.Len() != p.re.NumSubexp() {
			t.Errorf("%q with %s: %v, %v", example, expr, err, fieldsOf(&rec))
		}
	}
}
