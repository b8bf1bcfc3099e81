package cli

import (
	"context"
	"errors"
	"fmt"
	"time"

	"github.com/spf13/cobra"

	"bitsift/ingest"
	"bitsift/parse"
)

// followFlags are the flags of `report --follow`.
type followFlags struct {
	follow      bool
	forDur      time.Duration
	idle        time.Duration
	rotateGrace time.Duration
	poll        bool
}

func (f *followFlags) register(cmd *cobra.Command) {
	fs := cmd.Flags()
	fs.BoolVar(&f.follow, "follow", false, "read one live file from its start and go on as it grows, across rotations")
	fs.DurationVar(&f.forDur, "for", 0, "with --follow: stop after this long (e.g. 30s, 5m)")
	fs.DurationVar(&f.idle, "idle", 0, "with --follow: stop once no line has come for this long (e.g. 4s)")
	fs.DurationVar(&f.rotateGrace, "rotate-grace", parse.DefaultRotateGrace, "with --follow: how long a rotated file must be quiet before the new one is read")
	fs.BoolVar(&f.poll, "poll", false, "with --follow: look for changes every 250ms instead of waiting for notifications (network filesystems)")
}

// check rejects follow flags given without --follow.
func (f *followFlags) check() error {
	if !f.follow && (f.forDur != 0 || f.idle != 0 || f.poll) {
		return &ExitError{Code: ExitUsage, Err: errors.New("--for, --idle and --poll need --follow")}
	}
	if f.forDur < 0 || f.idle < 0 || f.rotateGrace <= 0 {
		return &ExitError{Code: ExitUsage, Err: errors.New("--for and --idle must not be negative, and --rotate-grace must be above 0")}
	}
	return nil
}

// read follows the one file in paths into in until --for, --idle or an
// interrupt ends it. Its end is not an error: the report follows.
func (f *followFlags) read(ctx context.Context, in *ingest.Ingester, paths []string, maxLine int) error {
	if err := f.check(); err != nil {
		return err
	}
	if len(paths) != 1 {
		return &ExitError{Code: ExitUsage, Err: fmt.Errorf("--follow reads one file, not %d (follow each in its own run)", len(paths))}
	}
	fl, err := parse.NewFollower(paths[0], parse.FollowOptions{
		FromStart: true, RotateGrace: f.rotateGrace, Poll: f.poll, Idle: f.idle, MaxLine: maxLine,
	})
	if err != nil {
		return &ExitError{Code: ExitUnreadable, Err: err}
	}
	defer fl.Close()
	if f.forDur > 0 {
		var cancel context.CancelFunc
		ctx, cancel = context.WithTimeout(ctx, f.forDur)
		defer cancel()
	}
	in.AddSource(paths[0])
	selfStopping.Store(true)
	err = in.ReadSource(ctx, fl)
	if errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded) {
		return nil
	}
	return err
}
