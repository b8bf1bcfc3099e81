// Command fakekafka runs an in-process Kafka cluster (kfake) for the
// screen's end-to-end tests: it writes the brokers' addresses to a file,
// then produces the demo stream into a topic at a steady rate until it is
// stopped. Not part of bitsift; tests build it.
package main

import (
	"context"
	"flag"
	"fmt"
	"os"
	"os/signal"
	"strings"
	"syscall"
	"time"

	"github.com/twmb/franz-go/pkg/kgo"

	"bitsift/demo"
	"bitsift/internal/kafkafake"
)

func main() {
	parts := flag.Int("parts", 6, "partitions of the topic")
	topic := flag.String("topic", "logs", "topic to create and produce into")
	addrFile := flag.String("addr-file", "", "file to write the brokers' addresses to (host:port,...)")
	rate := flag.Float64("rate", 200, "demo lines a second (0: none)")
	flag.Parse()
	if err := run(*parts, *topic, *addrFile, *rate); err != nil {
		fmt.Fprintln(os.Stderr, "fakekafka:", err)
		os.Exit(1)
	}
}

func run(parts int, topic, addrFile string, rate float64) error {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	c, err := kafkafake.New(int32(parts), topic)
	if err != nil {
		return err
	}
	defer c.Close()
	addrs := strings.Join(c.Brokers, ",")
	if addrFile != "" {
		tmp := addrFile + ".tmp"
		if err := os.WriteFile(tmp, []byte(addrs+"\n"), 0o644); err != nil {
			return err
		}
		if err := os.Rename(tmp, addrFile); err != nil {
			return err
		}
	} else {
		fmt.Println(addrs)
	}
	if rate <= 0 {
		<-ctx.Done()
		return nil
	}
	cl, err := kgo.NewClient(kgo.SeedBrokers(c.Brokers...), kgo.RecordPartitioner(kgo.ManualPartitioner()))
	if err != nil {
		return err
	}
	defer cl.Close()
	g := demo.New(1, 0)
	tick := time.NewTicker(100 * time.Millisecond)
	defer tick.Stop()
	per := max(1, int(rate/10))
	var n int
	for {
		select {
		case <-ctx.Done():
			return nil
		case <-tick.C:
		}
		recs := make([]*kgo.Record, per)
		for i := range recs {
			recs[i] = &kgo.Record{Topic: topic, Partition: int32(n % parts), Value: g.Append(nil)}
			n++
		}
		if err := cl.ProduceSync(ctx, recs...).FirstErr(); err != nil && ctx.Err() == nil {
			return err
		}
	}
}
