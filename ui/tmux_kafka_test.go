package ui

import (
	"context"
	"fmt"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/twmb/franz-go/pkg/kgo"

	"bitsift/demo"
	"bitsift/internal/kafkafake"
)

// TestTmuxWatchTopic: watch on a Kafka topic (kfake in this process, or
// the cluster in KAFKA_BROKERS) shows the live screen, and the Input screen
// lists the six partitions with their offsets and lag, while a producer
// keeps writing the demo stream into them.
func TestTmuxWatchTopic(t *testing.T) {
	t.Parallel() // waits on the screen, mostly; the serial tmux tests time keys
	if testing.Short() {
		t.Skip("-short: the end-to-end screen test runs a binary for seconds")
	}
	bin := buildBinary(t)
	c, topic := kafkafake.Start(t, 6)
	cl := c.Client(t, kgo.RecordPartitioner(kgo.ManualPartitioner()))
	ctx, cancel := context.WithCancel(context.Background())
	var wg sync.WaitGroup
	t.Cleanup(func() { cancel(); wg.Wait() })
	wg.Add(1)
	go func() {
		defer wg.Done()
		g := demo.New(3, 0)
		for n := 0; ctx.Err() == nil; {
			recs := make([]*kgo.Record, 60)
			for i := range recs {
				recs[i] = &kgo.Record{Topic: topic, Partition: int32(n % 6), Value: g.Append(nil)}
				n++
			}
			cl.ProduceSync(ctx, recs...)
			select {
			case <-ctx.Done():
			case <-time.After(50 * time.Millisecond):
			}
		}
	}()
	tt := startTmux(t, 100, 30, fmt.Sprintf("%s watch --brokers %s --topic %s --start oldest", bin, strings.Join(c.Brokers, ","), topic))
	tt.waitFor("[1 Fields]", "route", "rec/s", "live", "kafka bt", "6 partitions", "lag")
	tt.keys("6")
	screen := tt.waitFor("[6 Input]", "PARTITIONS  6", "READ TO", "LOG END", "LAG", topic+"/0", topic+"/5", "start ", "6 partitions of "+topic)
	if strings.Contains(screen, topic+"/6") {
		t.Errorf("a seventh partition on the Input screen:\n%s", screen)
	}
	tt.keys("q")
	screen = tt.waitFor("EXIT=")
	if !strings.Contains(screen, "EXIT=0") {
		t.Errorf("q did not exit 0:\n%s", screen)
	}
}
