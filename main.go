// Command bitsift measures how much information each field of a log stream
// carries. See README.md.
package main

import (
	"context"
	"fmt"
	"os"
	"os/signal"
	"runtime/debug"
	"runtime/pprof"
	"runtime/trace"
	"syscall"
	"time"

	"github.com/mattn/go-isatty"

	"bitsift/cli"
)

// stopWithin is how long an interrupted run may take to stop on its own
// before it is ended outright: a read blocked in the kernel (a FIFO with
// no writer, a terminal) cannot see its context.
const stopWithin = time.Second

// gcPercent is the heap growth, in percent of the live heap, at which the
// collector runs (Go's default is 100). bitsift's memory is mostly large
// pointer-free arrays (value counts, id columns, pair tables), which the
// collector marks at almost no cost, so collecting sooner costs little CPU
// and keeps the peak near the live heap: on 1M demo lines, report -o json
// peaked at 203 MB RSS instead of 243 MB, CPU time unchanged within the
// noise (medians of 3, issue 13). GOGC in the environment wins.
const gcPercent = 25

func main() {
	if os.Getenv("GOGC") == "" {
		debug.SetGCPercent(gcPercent)
	}
	// A closed pipe (bitsift report | head) then shows as EPIPE on write,
	// which the commands treat as a quiet end, instead of killing the
	// process.
	signal.Ignore(syscall.SIGPIPE)
	ctx, cancel := context.WithCancelCause(context.Background())
	sigs := make(chan os.Signal, 2)
	signal.Notify(sigs, os.Interrupt, syscall.SIGTERM)
	go func() {
		s := <-sigs
		why := cli.Interrupted{Signal: s}
		cancel(why)
		// The commands stop and say so themselves; one that cannot (or a
		// second signal) is ended here, with the same code and word.
		var grace <-chan time.Time
		if !cli.SelfStopping() {
			grace = time.After(stopWithin)
		}
		select {
		case <-sigs:
		case <-grace:
		}
		fmt.Fprintf(os.Stderr, "bitsift: %s; stopped before the output was complete\n", why.Error())
		os.Exit(why.Code())
	}()
	// BITSIFT_CPUPROFILE=file writes a CPU profile of the run, for
	// `go tool pprof` (DEVELOPERS.md, "Measuring speed").
	if path := os.Getenv("BITSIFT_CPUPROFILE"); path != "" {
		if f, err := os.Create(path); err == nil {
			if pprof.StartCPUProfile(f) == nil {
				defer f.Close()
			}
		}
	}
	// BITSIFT_TRACE=file writes an execution trace, for `go tool trace`:
	// where the goroutines wait, which a CPU profile does not show.
	if path := os.Getenv("BITSIFT_TRACE"); path != "" {
		if f, err := os.Create(path); err == nil {
			if trace.Start(f) == nil {
				defer f.Close()
			}
		}
	}
	code := cli.Run(ctx, os.Args[1:], cli.IO{
		In: os.Stdin, Out: os.Stdout, Err: os.Stderr,
		IsTerminal: isatty.IsTerminal(os.Stdout.Fd()),
	})
	signal.Stop(sigs)
	pprof.StopCPUProfile()
	trace.Stop()
	if path := os.Getenv("BITSIFT_MEMPROFILE"); path != "" {
		if f, err := os.Create(path); err == nil {
			pprof.Lookup("heap").WriteTo(f, 0)
			f.Close()
		}
	}
	os.Exit(code)
}
