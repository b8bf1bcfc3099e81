// Command bitsift measures how much information each field of a log stream
// carries. See README.md.
package main

import (
	"context"
	"os"
	"os/signal"
	"syscall"

	"github.com/mattn/go-isatty"

	"bitsift/cli"
)

func main() {
	// A closed pipe (bitsift report | head) then shows as EPIPE on write,
	// which the commands treat as a quiet end, instead of killing the
	// process.
	signal.Ignore(syscall.SIGPIPE)
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	code := cli.Run(ctx, os.Args[1:], cli.IO{
		In: os.Stdin, Out: os.Stdout, Err: os.Stderr,
		IsTerminal: isatty.IsTerminal(os.Stdout.Fd()),
	})
	stop()
	os.Exit(code)
}
