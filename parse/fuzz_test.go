package parse

import "testing"

// Each parser's fuzz target; seeds are in testdata/fuzz/FuzzNAME/, and go
// test runs them on every run. Run one for longer with
// go test -fuzz FuzzNAME -fuzztime 30s ./parse/.

func FuzzRFC5424(f *testing.F) {
	p := &RFC5424{}
	f.Fuzz(func(t *testing.T, line []byte) { fuzzParse(t, p, line) })
}

func FuzzRFC3164(f *testing.F) {
	p := &RFC3164{}
	f.Fuzz(func(t *testing.T, line []byte) { fuzzParse(t, p, line) })
}

func FuzzAccess(f *testing.F) {
	p := &Access{}
	f.Fuzz(func(t *testing.T, line []byte) { fuzzParse(t, p, line) })
}
