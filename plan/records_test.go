package plan

import (
	"testing"
)

func TestDemoClassesDebug(t *testing.T) {
	debugClasses = func(s string) { t.Log(s) }
	defer func() { debugClasses = nil }()
	p := demoPlan(t, 20_000, Options{})
	for _, r := range p.Reductions {
		t.Logf("%s %+v", r.Class, r)
	}
}
