package parse

import (
	"strings"
	"testing"
	"unicode/utf16"
)

// TestDetectRefusesUTF16: JSON and logfmt lines encoded as UTF-16 (by Go's
// unicode/utf16, both byte orders, with and without the byte order mark)
// are detected as no format, where logfmt used to read them into fields
// named with NULs; UTF-8 text, and a line with a NUL or two, is not UTF-16.
func TestDetectRefusesUTF16(t *testing.T) {
	texts := []string{
		"{\"level\":\"info\",\"vessel\":7}\n{\"level\":\"warn\",\"vessel\":9}\n{\"level\":\"info\",\"vessel\":3}\n",
		"level=info msg=berthed vessel=7\nlevel=warn msg=delayed vessel=9\nlevel=info msg=left vessel=3\n",
	}
	for _, text := range texts {
		for _, little := range []bool{true, false} {
			for _, mark := range []bool{true, false} {
				var raw []byte
				if mark {
					raw = append(raw, 0xFF, 0xFE)
					if !little {
						raw[0], raw[1] = 0xFE, 0xFF
					}
				}
				for _, c := range utf16.Encode([]rune(text)) {
					if little {
						raw = append(raw, byte(c), byte(c>>8))
					} else {
						raw = append(raw, byte(c>>8), byte(c))
					}
				}
				var sample [][]byte
				for _, l := range strings.Split(string(raw), "\n") {
					sample = append(sample, []byte(l))
				}
				if d, err := Detect(sample); err == nil {
					t.Errorf("little-endian %v, mark %v: detected %s (%.2f) in %q", little, mark, d.Format.Name(), d.Confidence, raw[:20])
				}
			}
		}
		var sample [][]byte
		for _, l := range strings.Split(text, "\n") {
			sample = append(sample, []byte(l))
		}
		if _, err := Detect(sample); err != nil {
			t.Errorf("UTF-8 text not detected: %v", err)
		}
	}
	for _, l := range []string{"level=info", "a\x00b=c d=e f=g", "é"} {
		if LooksUTF16([]byte(l)) {
			t.Errorf("%q looks like UTF-16", l)
		}
	}
}
