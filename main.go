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
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	code := cli.Run(ctx, os.Args[1:], cli.IO{
		In: os.Stdin, Out: os.Stdout, Err: os.Stderr,
		IsTerminal: isatty.IsTerminal(os.Stdout.Fd()),
	})
	stop()
	os.Exit(code)
}
