package cli

import (
	"context"
	"errors"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"bitsift/ingest"
	"bitsift/kafka"
)

// topicFlags are the flags that point watch, replay, report and worker at
// a Kafka topic instead of files.
type topicFlags struct {
	conn  kafka.Conn
	topic string
	start string
}

// registerConn adds the cluster flags (brokers, TLS, SASL).
func (f *topicFlags) registerConn(cmd *cobra.Command) {
	fs := cmd.Flags()
	fs.StringSliceVar(&f.conn.Brokers, "brokers", nil, "Kafka brokers, host:port[,host:port...] (with --topic)")
	fs.StringVar(&f.topic, "topic", "", "read this Kafka topic instead of files")
	fs.BoolVar(&f.conn.TLS, "tls", false, "connect to the brokers over TLS")
	fs.StringVar(&f.conn.CAFile, "tls-ca", "", "PEM file of CA certificates to trust besides the system's (implies --tls)")
	fs.StringVar(&f.conn.CertFile, "tls-cert", "", "PEM client certificate (with --tls-key)")
	fs.StringVar(&f.conn.KeyFile, "tls-key", "", "PEM key of the client certificate")
	fs.StringVar(&f.conn.ServerName, "tls-server-name", "", "name to check in the brokers' certificates")
	fs.StringVar(&f.conn.SASL, "sasl", "", "SASL mechanism: "+strings.Join(kafka.SASLMechanisms, ", ")+
		"; user and password from --sasl-file or "+kafka.EnvUser+" and "+kafka.EnvPassword)
	fs.StringVar(&f.conn.CredFile, "sasl-file", "", "file with the SASL credentials: a line user=NAME and a line password=SECRET")
}

// register adds every topic flag; defaultStart is where reading begins.
func (f *topicFlags) register(cmd *cobra.Command, defaultStart string) {
	f.registerConn(cmd)
	cmd.Flags().StringVar(&f.start, "start", defaultStart, "with --topic: where to begin in each partition: newest, oldest, an offset, a time (RFC 3339) or a duration back from now (15m)")
}

// on says whether a topic was asked for.
func (f *topicFlags) on() bool { return f.topic != "" || len(f.conn.Brokers) > 0 }

// args checks the positional arguments: none with --topic, as many as
// files need without.
func (f *topicFlags) args(cmdName string, atLeast, atMost int) cobra.PositionalArgs {
	return func(cmd *cobra.Command, args []string) error {
		if f.on() {
			if len(args) > 0 {
				return usage("%s: give files or --topic, not both", cmdName)
			}
			if f.topic == "" || len(f.conn.Brokers) == 0 {
				return usage("%s: --topic and --brokers go together", cmdName)
			}
			return nil
		}
		if len(args) < atLeast || (atMost > 0 && len(args) > atMost) {
			if atMost == 1 {
				return usage("%s: give one file (or - for stdin), or --brokers and --topic", cmdName)
			}
			return usage("%s: give files (or - for stdin), or --brokers and --topic", cmdName)
		}
		return nil
	}
}

// open connects to the topic. bounded reads what the topic holds now and
// ends; idle ends the source once no record has come for that long.
func (f *topicFlags) open(ctx context.Context, bounded bool, idle time.Duration, maxLine int) (*kafka.Source, error) {
	start, err := kafka.ParseStart(f.start, time.Now())
	if err != nil {
		return nil, usage("%v", err)
	}
	src, err := kafka.Open(ctx, kafka.Options{Conn: f.conn, Topic: f.topic, Start: start, Bounded: bounded, Idle: idle, MaxLine: maxLine})
	if err != nil {
		return nil, &ExitError{Code: ExitUnreadable, Err: err}
	}
	return src, nil
}

// readTopic reads the topic into in: what it holds now (from --start to
// the end offsets it has when report begins), or with --follow on from
// there until --for, --idle or an interrupt. Its end is not an error.
func (c *reportCmd) readTopic(ctx context.Context, in *ingest.Ingester, maxLine int) error {
	if c.live.poll {
		return usage("report: --poll is for files")
	}
	if !c.live.follow && (c.live.forDur != 0 || c.live.idle != 0) {
		return usage("report: --for and --idle need --follow")
	}
	if c.live.forDur < 0 || c.live.idle < 0 {
		return usage("report: --for and --idle must not be negative")
	}
	src, err := c.topic.open(ctx, !c.live.follow, c.live.idle, maxLine)
	if err != nil {
		return err
	}
	defer src.Close()
	if c.live.forDur > 0 {
		var cancel context.CancelFunc
		ctx, cancel = context.WithTimeout(ctx, c.live.forDur)
		defer cancel()
	}
	in.AddSource(src.Status().Name)
	err = in.ReadSource(ctx, src)
	if errors.Is(err, context.DeadlineExceeded) || (errors.Is(err, context.Canceled) && c.live.follow) {
		return nil
	}
	return err
}
