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

func FuzzCRI(f *testing.F) {
	p := &CRI{}
	f.Fuzz(func(t *testing.T, line []byte) {
		fuzzParse(t, p, line)
		var rec Record
		for p.Flush(&rec) {
			rec.Reset()
		}
	})
}

func FuzzDocker(f *testing.F) {
	p := &Docker{}
	f.Fuzz(func(t *testing.T, line []byte) { fuzzParse(t, p, line) })
}

func FuzzEnvoy(f *testing.F) {
	p := &Envoy{}
	f.Fuzz(func(t *testing.T, line []byte) { fuzzParse(t, p, line) })
}

func FuzzKlog(f *testing.F) {
	p := &Klog{}
	f.Fuzz(func(t *testing.T, line []byte) { fuzzParse(t, p, line) })
}

func FuzzPrefixed(f *testing.F) {
	p := &Prefixed{}
	f.Fuzz(func(t *testing.T, line []byte) { fuzzParse(t, p, line) })
}

func FuzzPattern(f *testing.F) {
	p, err := NewPattern(`^(?P<zone>[A-Z]) (?P<sensor>\w+)=(?P<value>[\d.]+)(?: (?P<unit>\S+))?$`)
	if err != nil {
		f.Fatal(err)
	}
	f.Fuzz(func(t *testing.T, line []byte) { fuzzParse(t, p, line) })
}

func FuzzJSON(f *testing.F) {
	p := &JSON{}
	f.Fuzz(func(t *testing.T, line []byte) { fuzzParse(t, p, line) })
}

func FuzzLogfmt(f *testing.F) {
	p := &Logfmt{}
	f.Fuzz(func(t *testing.T, line []byte) { fuzzParse(t, p, line) })
}
