package parse

import (
	"errors"
	"fmt"
	"testing"
)

func TestCRI(t *testing.T) {
	// Line shape from the Kubernetes CRI logging design (kubernetes/design
	// -proposals, "CRI: Log management for container stdout/stderr"), from
	// memory: "2016-10-06T00:17:09.669794202Z stdout F log content".
	runParseCases(t, &CRI{}, []parseCase{
		{name: "full line, text", line: "2016-10-06T00:17:09.669794202Z stdout F log content 1",
			want: map[string]string{"time": "2016-10-06T00:17:09.669794202Z", "stream": "stdout", "log": "log content 1"}},
		// A Kubernetes component's klog line in its pod's log file.
		{name: "full line, klog", line: `2016-10-06T00:17:09.669794202Z stderr F I1006 00:17:09.669794       1 controller.go:88] "Synced" berth="12"`,
			want: map[string]string{"time": "2016-10-06T00:17:09.669794202Z", "stream": "stderr", "level": "I", "log.time": "1006 00:17:09.669794",
				"thread": "1", "source": "controller.go:88", "msg": "Synced", "berth": "12"}},
		{name: "inner JSON with its own time",
			line: `2025-03-02T06:00:00.5Z stderr F {"time":"x","zone":"B","rh":71}`,
			want: map[string]string{"time": "2025-03-02T06:00:00.5Z", "stream": "stderr", "log.time": "x", "zone": "B", "rh": "71"}},
		{name: "inner logfmt", line: `2025-03-02T06:00:00Z stdout F zone=B rh=71 msg="mist on"`,
			want: map[string]string{"time": "2025-03-02T06:00:00Z", "stream": "stdout", "zone": "B", "rh": "71", "msg": "mist on"}},
		{name: "broken inner JSON stays text", line: `2025-03-02T06:00:00Z stdout F {"zone":`,
			want: map[string]string{"time": "2025-03-02T06:00:00Z", "stream": "stdout", "log": `{"zone":`}},
		{name: "empty message", line: "2025-03-02T06:00:00Z stdout F ",
			want: map[string]string{"time": "2025-03-02T06:00:00Z", "stream": "stdout", "log": ""}},
		{name: "tag with flags", line: "2025-03-02T06:00:00Z stdout F:x hi",
			want: map[string]string{"time": "2025-03-02T06:00:00Z", "stream": "stdout", "log": "hi"}},
		{name: "bad stream", line: "2025-03-02T06:00:00Z stdin F hi", reject: "stream"},
		{name: "bad tag", line: "2025-03-02T06:00:00Z stdout X hi", reject: "tag"},
		{name: "no time", line: "stdout F hi", reject: "timestamp"},
	})
}

func TestCRIJoin(t *testing.T) {
	c := &CRI{}
	lines := []string{
		"2025-03-02T06:00:00Z stdout P {\"zone\":",
		"2025-03-02T06:00:01Z stderr F fan 3 stalled",
		"2025-03-02T06:00:02Z stdout P \"B\",",
		"2025-03-02T06:00:03Z stdout F \"rh\":71}",
		"2025-03-02T06:00:04Z stderr P tail without end",
	}
	want := []map[string]string{
		nil,
		{"time": "2025-03-02T06:00:01Z", "stream": "stderr", "log": "fan 3 stalled"},
		nil,
		{"time": "2025-03-02T06:00:00Z", "stream": "stdout", "zone": "B", "rh": "71"},
		nil,
	}
	for i, l := range lines {
		var rec Record
		err := c.Parse([]byte(l), &rec)
		if want[i] == nil {
			if !errors.Is(err, ErrPart) {
				t.Fatalf("line %d: %v, want ErrPart", i+1, err)
			}
			continue
		}
		if err != nil {
			t.Fatalf("line %d: %v", i+1, err)
		}
		assertFields(t, &rec, want[i])
	}
	var rec Record
	if !c.Flush(&rec) {
		t.Fatal("Flush gave nothing; the stderr partial is open")
	}
	assertFields(t, &rec, map[string]string{"time": "2025-03-02T06:00:04Z", "stream": "stderr", "log": "tail without end"})
	rec.Reset()
	if c.Flush(&rec) {
		t.Fatalf("second Flush gave %v", fieldsOf(&rec))
	}
}

func assertFields(t *testing.T, rec *Record, want map[string]string) {
	t.Helper()
	got := fieldsOf(rec)
	if len(got) != len(want) {
		t.Errorf("fields %v, want %v", got, want)
		return
	}
	for k, v := range want {
		if got[k] != v {
			t.Errorf("%s = %q, want %q (all: %v)", k, got[k], v, got)
		}
	}
}

func TestDocker(t *testing.T) {
	// Line shape of Docker's json-file logging driver (docs.docker.com,
	// "JSON File logging driver"), from memory.
	runParseCases(t, &Docker{}, []parseCase{
		{name: "text", line: `{"log":"Log line is here\n","stream":"stdout","time":"2019-01-01T11:11:11.111111111Z"}`,
			want: map[string]string{"log": "Log line is here", "stream": "stdout", "time": "2019-01-01T11:11:11.111111111Z"}},
		{name: "inner JSON", line: `{"log":"{\"level\":\"warn\",\"stream\":\"x\",\"zone\":\"C\"}\n","stream":"stderr","time":"2025-03-02T06:00:00Z"}`,
			want: map[string]string{"level": "warn", "log.stream": "x", "zone": "C", "stream": "stderr", "time": "2025-03-02T06:00:00Z"}},
		{name: "inner logfmt with CRLF", line: `{"log":"zone=C pump=on\r\n","stream":"stdout","time":"2025-03-02T06:00:00Z"}`,
			want: map[string]string{"zone": "C", "pump": "on", "stream": "stdout", "time": "2025-03-02T06:00:00Z"}},
		{name: "no log member", line: `{"stream":"stdout"}`, reject: `"log"`},
		{name: "broken JSON", line: `{"log":"x`, reject: "unterminated"},
	})
}

func TestPrefixed(t *testing.T) {
	runParseCases(t, &Prefixed{}, []parseCase{
		{name: "RFC 3339 and JSON", line: `2025-01-01T00:00:00Z INFO {"k":"v"}`,
			want: map[string]string{"time": "2025-01-01T00:00:00Z", "level": "INFO", "k": "v"}},
		{name: "space date, bracket level, logfmt", line: `2025-03-02 06:00:00.120 [warn] zone=B rh=93`,
			want: map[string]string{"time": "2025-03-02 06:00:00.120", "level": "warn", "zone": "B", "rh": "93"}},
		{name: "colon level, JSON with level", line: `2025-03-02T06:00:00+01:00 error: {"level":"e","zone":"A"}`,
			want: map[string]string{"time": "2025-03-02T06:00:00+01:00", "level": "error", "log.level": "e", "zone": "A"}},
		{name: "plain text body", line: `2025-03-02T06:00:00Z DEBUG misting valve 4 closed`,
			want: map[string]string{"time": "2025-03-02T06:00:00Z", "level": "DEBUG", "msg": "misting valve 4 closed"}},
		{name: "no level", line: `2025-03-02T06:00:00Z stdout F hi`, reject: "level"},
		{name: "no time", line: `INFO {"k":"v"}`, reject: "timestamp"},
		// A platform's gathered output, "TIME app[proc]: body" (the shape of
		// a PaaS router's lines, written from memory).
		{name: "source tag, logfmt", line: `2025-03-02T06:00:00.120431+00:00 router[web.2]: at=info zone=B status=200`,
			want: map[string]string{"time": "2025-03-02T06:00:00.120431+00:00", "app": "router", "proc": "web.2", "at": "info", "zone": "B", "status": "200"}},
		{name: "source tag, plain text", line: `2025-03-02T06:00:00Z app[worker.1]: misting valve 4 closed`,
			want: map[string]string{"time": "2025-03-02T06:00:00Z", "app": "app", "proc": "worker.1", "msg": "misting valve 4 closed"}},
		{name: "no level, logfmt", line: `2025-03-02T06:00:00Z zone=B rh=93`,
			want: map[string]string{"time": "2025-03-02T06:00:00Z", "zone": "B", "rh": "93"}},
		{name: "no level, JSON", line: `2025-03-02T06:00:00Z {"zone":"B"}`,
			want: map[string]string{"time": "2025-03-02T06:00:00Z", "zone": "B"}},
		{name: "kubectl --timestamps, klog", line: `2025-03-02T06:00:00.120431Z W0302 06:00:00.120431   7 zone.go:12] vent stuck`,
			want: map[string]string{"time": "2025-03-02T06:00:00.120431Z", "level": "W", "log.time": "0302 06:00:00.120431", "thread": "7", "source": "zone.go:12", "msg": "vent stuck"}},
		{name: "Go log date, logfmt", line: `2025/03/02 06:00:00 level=info msg="valve closed" zone=B`,
			want: map[string]string{"time": "2025/03/02 06:00:00", "level": "info", "msg": "valve closed", "zone": "B"}},
		{name: "no level, plain text", line: `2025-03-02T06:00:00Z misting valve 4 closed`, reject: "no level or source"},
		{name: "empty tag", line: `2025-03-02T06:00:00Z [x]: hi`, reject: "no level or source"},
	})
}

// TestLogfmtAfterTimestamp: lines of a timestamp, a source and logfmt
// pairs detect as prefixed, with one field per key: read as logfmt they
// made each line's timestamp a field name of its own.
func TestLogfmtAfterTimestamp(t *testing.T) {
	var sample [][]byte
	for i := 0; i < 40; i++ {
		sample = append(sample, []byte(fmt.Sprintf("2025-03-02T06:%02d:%02d.%06d+00:00 router[web.%d]: at=info path=\"/v1/zones/%d\" status=200 service=%dms", i/60, i%60, i, i%3, i%7, i%40)))
	}
	d, err := Detect(sample)
	if err != nil || d.Format.Name() != "prefixed" {
		t.Fatalf("detected %v (%v)", d.Format, err)
	}
}

func TestPattern(t *testing.T) {
	p, err := NewPattern(`^(?P<zone>[A-Z]) (?P<sensor>\w+)=(?P<value>[\d.]+)(?: (?P<unit>\S+))?$`)
	if err != nil {
		t.Fatal(err)
	}
	runParseCases(t, p, []parseCase{
		{name: "all groups", line: "B rh=71.5 %", want: map[string]string{"zone": "B", "sensor": "rh", "value": "71.5", "unit": "%"}},
		{name: "optional group absent", line: "C temp=24", want: map[string]string{"zone": "C", "sensor": "temp", "value": "24"}},
		{name: "no match", line: "what is this", reject: "does not match"},
	})
	for _, bad := range []string{`(unclosed`, `no (groups) here`} {
		if _, err := NewPattern(bad); err == nil {
			t.Errorf("NewPattern(%q) accepted", bad)
		}
	}
}
