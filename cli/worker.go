package cli

import (
	"context"
	"errors"
	"io"
	"time"

	"github.com/spf13/cobra"

	"bitsift/ingest"
	"bitsift/kafka"
	"bitsift/profile"
)

// workerCmd is `bitsift worker`: one member of a consumer group that
// profiles its share of a topic's partitions.
type workerCmd struct {
	streamFlags
	topic  topicFlags
	group  string
	dir    string
	bucket time.Duration
	forDur time.Duration
	idle   time.Duration
	maxRec int64
	quiet  bool
}

func newWorkerCmd(std IO) *cobra.Command {
	c := &workerCmd{}
	cmd := &cobra.Command{
		Use:   "worker --brokers HOST:PORT --topic T --group G --profiles DIR",
		Short: "Profile a Kafka topic's partitions as one member of a consumer group",
		Long: `worker joins the consumer group G on topic T and, for the partitions Kafka
gives it, writes one count profile per partition and time bucket into DIR,
each recording the offsets it covers. It commits a partition's offsets only
once the profile of the records before them is safely on disk (a temporary
file, synced, then renamed). Run as many workers as the topic has partitions
or fewer, on as many machines; Kafka shares the partitions among them and
moves them when a worker joins, leaves or dies.

bitsift merge DIR then chains each partition's profiles by offset, leaves out
a profile whose range another already counts (a worker that died after
writing and before committing), reports a range no profile covers as missing
data, and prints the report of all the records, as one process reading the
whole topic would have.

--for and --idle end a worker as they end report --follow; SIGTERM or ctrl+c
end it after its current profiles are written and committed.`,
		Example: `  bitsift worker --brokers kafka-1:9092,kafka-2:9092 --topic app-logs --group bitsift-profiles --profiles /shared/profiles
  bitsift worker --brokers kafka-1:9093 --tls --sasl scram-sha-512 --sasl-file /etc/bitsift/kafka.cred \
      --topic app-logs --group bitsift-profiles --profiles /shared/profiles --bucket 10m --idle 5m
  bitsift merge /shared/profiles`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return c.run(cmd.Context(), std)
		},
	}
	c.topic.register(cmd, "oldest")
	c.register(cmd, "all")
	fs := cmd.Flags()
	fs.StringVar(&c.group, "group", "", "consumer group the workers share")
	fs.StringVar(&c.dir, "profiles", "", "folder the profiles are written to (shared by the workers, or gathered before merge)")
	fs.DurationVar(&c.bucket, "bucket", time.Minute, "time bucket of a profile, by the records' Kafka timestamps; a profile is also closed after this long")
	fs.DurationVar(&c.forDur, "for", 0, "stop after this long (e.g. 30m)")
	fs.DurationVar(&c.idle, "idle", 0, "stop once no record has come for this long (e.g. 1m)")
	fs.Int64Var(&c.maxRec, "max-records", 100_000, "close a profile once it counts this many records (bounds the memory: a profile keeps every value and pair cell)")
	fs.BoolVar(&c.quiet, "quiet", false, "do not log profiles and rebalances to stderr")
	return cmd
}

func (c *workerCmd) run(ctx context.Context, std IO) error {
	switch {
	case c.topic.topic == "" || len(c.topic.conn.Brokers) == 0:
		return usage("worker: give --brokers and --topic")
	case c.group == "":
		return usage("worker: give --group: the consumer group the workers share")
	case c.dir == "":
		return usage("worker: give --profiles DIR")
	case c.bucket <= 0 || c.forDur < 0 || c.idle < 0:
		return usage("worker: --bucket must be above 0, --for and --idle not negative")
	case c.window != "all":
		return usage("worker: a profile counts every record of its range: drop --window")
	}
	start, err := kafka.ParseStart(c.topic.start, time.Now())
	if err != nil {
		return usage("%v", err)
	}
	if start.Kind != "oldest" && start.Kind != "newest" {
		return usage("worker: --start is oldest or newest (where a partition without a committed offset begins)")
	}
	cfg, err := c.config()
	if err != nil {
		return err
	}
	// Every value and pair cell is kept: which fields are identifiers is
	// decided when the profiles are merged, on the totals.
	cfg.Model.KeepText, cfg.Model.NoIdentifiers = true, true
	red := redactionOf(cfg)
	var log io.Writer = std.Err
	if c.quiet {
		log = nil
	}
	w, err := kafka.NewWorker(kafka.WorkerOptions{
		Conn: c.topic.conn, Topic: c.topic.topic, Group: c.group, Dir: c.dir, Start: start,
		Bucket: c.bucket, MaxRecords: c.maxRec, For: c.forDur, Idle: c.idle, MaxLine: cfg.MaxLine, Log: log,
		Ingester: func() (*ingest.Ingester, error) { return ingest.New(cfg) },
		Encode: func(seg *kafka.Segment, out io.Writer) error {
			return profile.Write(out, kafka.SegmentProfile(seg, red, 0))
		},
	})
	if err != nil {
		return &ExitError{Code: ExitUnreadable, Err: err}
	}
	err = w.Run(ctx)
	if err != nil && !errors.Is(err, context.Canceled) {
		return &ExitError{Code: ExitUnreadable, Err: err}
	}
	return nil
}
