package parse

import (
	"fmt"
	"strings"
	"testing"
)

// TestLooksContinuation: the continuation lines of Java and Python traces
// (shapes as the JVM's Throwable.printStackTrace and CPython's traceback
// module print them, written from memory) are continuations; record lines
// of the formats bitsift reads, indented JSON and syslog included, are not.
func TestLooksContinuation(t *testing.T) {
	cont := []string{
		"\tat quay.berth.Planner.assign(Planner.java:212)",
		"\t... 3 more",
		"Caused by: java.lang.ArithmeticException: / by zero",
		"java.lang.IllegalStateException: berth 12 over capacity",
		"quay.berth.Planner$OverCapacityException",
		"Traceback (most recent call last):",
		"  File \"berth.py\", line 12, in plan",
		"    raise ValueError(\"over capacity\")",
		"ValueError: over capacity",
		"... 14 more",
	}
	records := []string{
		"2026-03-14 02:11:09,417 ERROR [berth-io-3] quay.berth.Planner: planning failed",
		`{"level":"error","msg":"planning failed"}`,
		`  {"level":"error"}`,
		"level=error msg=\"planning failed\"",
		"<134>1 2026-03-14T02:11:09Z quay berthd 12 - - planning failed",
		"Mar 14 02:11:09 quay berthd[12]: planning failed",
		"ErrorCount: 3",
		"Errors: 3 in berth 12",
		"",
	}
	for _, l := range cont {
		if !LooksContinuation([]byte(l)) {
			t.Errorf("%q: not a continuation", l)
		}
	}
	for _, l := range records {
		if LooksContinuation([]byte(l)) {
			t.Errorf("%q: a continuation", l)
		}
	}
}

// TestDetectPastTraces: a Java service's log whose stack traces are most
// of its lines is still detected as the header format, with its thread
// and component, as the same log without them is.
func TestDetectPastTraces(t *testing.T) {
	var plain, traced []string
	for i := 0; i < 60; i++ {
		l := fmt.Sprintf("2026-03-14 02:%02d:%02d,417 INFO [berth-io-%d] quay.berth.Planner: berth %d assigned", i/60, i%60, i%4, i)
		plain, traced = append(plain, l), append(traced, l)
		if i%10 == 9 {
			traced = append(traced, "java.lang.IllegalStateException: over capacity")
			for k := 0; k < 12; k++ {
				traced = append(traced, fmt.Sprintf("\tat quay.berth.Frame%d.run(Frame.java:%d)", k, k))
			}
			traced = append(traced, "Caused by: java.lang.ArithmeticException: / by zero", "\t... 7 more")
		}
	}
	for name, lines := range map[string][]string{"plain": plain, "traced": traced} {
		var sample [][]byte
		for _, l := range lines {
			sample = append(sample, []byte(l))
		}
		d, err := Detect(sample)
		if err != nil || d.Format.Name() != "header" {
			t.Fatalf("%s: %v, %v", name, d.Format, err)
		}
		if got := d.Format.(*Header).Slots(); !strings.Contains(got, "thread") || !strings.Contains(got, "component") {
			t.Errorf("%s: header %s", name, got)
		}
	}
}
