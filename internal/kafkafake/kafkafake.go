// Package kafkafake starts an in-process Kafka cluster for tests: franz-go's
// kfake, which speaks the real protocol (consumer groups included), bound
// to 127.0.0.1 on free ports. Tests that set KAFKA_BROKERS get a real
// cluster instead, with a fresh topic of their own.
package kafkafake

import (
	"context"
	"fmt"
	"os"
	"strings"
	"sync/atomic"
	"testing"
	"time"

	"github.com/twmb/franz-go/pkg/kadm"
	"github.com/twmb/franz-go/pkg/kfake"
	"github.com/twmb/franz-go/pkg/kgo"
)

// Cluster is a cluster to test against: a kfake one, or the real one
// KAFKA_BROKERS names.
type Cluster struct {
	Brokers []string
	fake    *kfake.Cluster
}

// New starts a kfake cluster (three brokers) with the topics, each with
// parts partitions.
func New(parts int32, topics ...string) (*Cluster, error) { return NewWith(parts, topics) }

// NewWith is New with more kfake options (TLS, SASL users).
func NewWith(parts int32, topics []string, more ...kfake.Opt) (*Cluster, error) {
	opts := []kfake.Opt{kfake.NumBrokers(3), kfake.SeedTopics(parts, topics...),
		// Groups re-balance fast in tests: a member that died is noticed
		// within the session timeout.
		kfake.GroupMinSessionTimeout(500 * time.Millisecond)}
	c, err := kfake.NewCluster(append(opts, more...)...)
	if err != nil {
		return nil, err
	}
	return &Cluster{Brokers: c.ListenAddrs(), fake: c}, nil
}

var topicSeq atomic.Int64

// Start gives a test a cluster and a fresh topic of parts partitions: the
// real cluster in KAFKA_BROKERS (host:port,...) when set, else a kfake
// cluster closed when the test ends.
func Start(t testing.TB, parts int32) (*Cluster, string) {
	t.Helper()
	topic := fmt.Sprintf("bt%d-%d", time.Now().UnixNano()%1e6, topicSeq.Add(1))
	if env := os.Getenv("KAFKA_BROKERS"); env != "" {
		c := &Cluster{Brokers: strings.Split(env, ",")}
		adm := c.Admin(t)
		ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
		defer cancel()
		if _, err := adm.CreateTopic(ctx, parts, -1, nil, topic); err != nil {
			t.Fatalf("create topic %s on KAFKA_BROKERS: %v", topic, err)
		}
		t.Cleanup(func() {
			ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
			defer cancel()
			adm.DeleteTopics(ctx, topic)
		})
		return c, topic
	}
	c, err := New(parts, topic)
	if err != nil {
		t.Fatalf("kfake: %v", err)
	}
	t.Cleanup(c.Close)
	return c, topic
}

// Real says the cluster is the one KAFKA_BROKERS names.
func (c *Cluster) Real() bool { return c.fake == nil }

// SessionTimeout is a consumer group session timeout the cluster allows:
// one second on kfake (set so in New), six on a real cluster (the least a
// broker allows by default, group.min.session.timeout.ms).
func (c *Cluster) SessionTimeout() time.Duration {
	if c.Real() {
		return 6 * time.Second
	}
	return time.Second
}

// Close stops a kfake cluster (nothing for a real one).
func (c *Cluster) Close() {
	if c.fake != nil {
		c.fake.Close()
	}
}

// Client is a plain client of the cluster, closed when the test ends.
func (c *Cluster) Client(t testing.TB, opts ...kgo.Opt) *kgo.Client {
	t.Helper()
	cl, err := kgo.NewClient(append([]kgo.Opt{kgo.SeedBrokers(c.Brokers...)}, opts...)...)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(cl.Close)
	return cl
}

// Admin is an admin client of the cluster.
func (c *Cluster) Admin(t testing.TB) *kadm.Client { return kadm.NewClient(c.Client(t)) }

// Produce writes each value to partition part of topic (part < 0: the
// client's default partitioner) and waits for every write.
func Produce(ctx context.Context, cl *kgo.Client, topic string, part int32, values ...[]byte) error {
	recs := make([]*kgo.Record, len(values))
	for i, v := range values {
		recs[i] = &kgo.Record{Topic: topic, Partition: part, Value: v}
	}
	return cl.ProduceSync(ctx, recs...).FirstErr()
}
