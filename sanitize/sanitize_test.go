package sanitize

import (
	"testing"
)

// The sequences are the ones ECMA-48 (control functions) and xterm's
// control sequence documentation define: CSI is ESC [, OSC is ESC ], BEL
// ends an OSC; C1 controls are U+0080..U+009F.
func TestString(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"plain text", "plain text"},
		{"\x1b[2J\x1b[H", `\x1b[2J\x1b[H`},
		{"\x1b]0;pwned\x07", `\x1b]0;pwned\a`},
		{"a\nb\tc\rd", `a\nb\tc\rd`},
		{"\u009b31m", `\x9b31m`},
		{"bad \xff utf8", "bad \uFFFD utf8"},
		{"rtl \u202e override", `rtl \u202e override`},
		{"café 日本", "café 日本"},
	} {
		got := String(c.in)
		if got != c.want {
			t.Errorf("String(%q) = %q, want %q", c.in, got, c.want)
		}
		for _, r := range got {
			if r < 0x20 || r == 0x7f || (r >= 0x80 && r < 0xa0) {
				t.Errorf("String(%q) still holds control %U", c.in, r)
			}
		}
	}
}

func TestFitWidth(t *testing.T) {
	for _, c := range []struct {
		in   string
		w    int
		want string
	}{
		{"quayside", 4, "qua…"},
		{"日本語テキスト", 6, "日本…"},
		{"ok", 5, "ok"},
	} {
		got := Fit(c.in, c.w)
		if got != c.want || Width(got) > c.w {
			t.Errorf("Fit(%q, %d) = %q (width %d), want %q", c.in, c.w, got, Width(got), c.want)
		}
	}
	if p := Pad("ab", 5); p != "ab   " {
		t.Errorf("Pad = %q", p)
	}
	if w := Width(Pad("日本", 5)); w != 5 {
		t.Errorf("Pad width %d", w)
	}
}
