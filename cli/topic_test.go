package cli

import (
	"bytes"
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/twmb/franz-go/pkg/kgo"

	"bitsift/internal/kafkafake"
)

// produceLines writes the lines of data into topic's partitions in turn.
func produceLines(t *testing.T, c *kafkafake.Cluster, topic string, parts int32, data []byte) {
	t.Helper()
	cl := c.Client(t, kgo.RecordPartitioner(kgo.ManualPartitioner()))
	var recs []*kgo.Record
	for i, l := range bytes.Split(bytes.TrimSuffix(data, []byte("\n")), []byte("\n")) {
		recs = append(recs, &kgo.Record{Topic: topic, Partition: int32(i) % parts, Value: l})
	}
	if err := cl.ProduceSync(context.Background(), recs...).FirstErr(); err != nil {
		t.Fatal(err)
	}
}

// TestReportTopicEqualsFile: the report of a topic holding the demo lines
// has the figures of the report of the same lines in a file (the file
// report is the independent reading here: FileSource and its parallel
// pipeline, not the Kafka source).
func TestReportTopicEqualsFile(t *testing.T) {
	c, topic := kafkafake.Start(t, 3)
	data := demoLines(3000)
	produceLines(t, c, topic, 3, data)
	code, fromTopic, errs := run(t, "", "report", "-o", "json", "--brokers", strings.Join(c.Brokers, ","), "--topic", topic)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	code, fromFile, errs := run(t, "", "report", "-o", "json", write(t, "demo.jsonl", data))
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	type field struct {
		Name     string  `json:"name"`
		Entropy  float64 `json:"entropy_bits"`
		Distinct int64   `json:"distinct"`
		Kind     string  `json:"kind"`
	}
	var a, b struct {
		Fields []field `json:"fields"`
	}
	if err := json.Unmarshal([]byte(fromTopic), &a); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal([]byte(fromFile), &b); err != nil {
		t.Fatal(err)
	}
	if len(a.Fields) == 0 || len(a.Fields) != len(b.Fields) {
		t.Fatalf("%d fields from the topic, %d from the file", len(a.Fields), len(b.Fields))
	}
	byName := map[string]field{}
	for _, f := range b.Fields {
		byName[f.Name] = f
	}
	for _, f := range a.Fields {
		g := byName[f.Name]
		if f.Distinct != g.Distinct || f.Kind != g.Kind || abs(f.Entropy-g.Entropy) > 1e-9 {
			t.Errorf("field %s: topic %+v, file %+v", f.Name, f, g)
		}
	}
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

// TestWatchTopicHeadless: watch on a topic without a terminal reads until
// --idle, then prints the text report with the partitions' events.
func TestWatchTopicHeadless(t *testing.T) {
	c, topic := kafkafake.Start(t, 2)
	produceLines(t, c, topic, 2, demoLines(500))
	code, out, errs := run(t, "", "watch", "--brokers", strings.Join(c.Brokers, ","), "--topic", topic, "--start", "oldest", "--idle", "1s")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, want := range []string{"500 lines read: 500 records", "2 partitions of " + topic + " from oldest"} {
		if !strings.Contains(out, want) {
			t.Errorf("report does not say %q:\n%s", want, out)
		}
	}
}

func TestTopicUsage(t *testing.T) {
	cred := filepath.Join(t.TempDir(), "cred")
	os.WriteFile(cred, []byte("user=harbor\n"), 0o600)
	for _, args := range [][]string{
		{"report", "--topic", "logs"},
		{"report", "--brokers", "127.0.0.1:1"},
		{"report", "--brokers", "127.0.0.1:1", "--topic", "logs", "app.log"},
		{"report", "--brokers", "127.0.0.1:1", "--topic", "logs", "--start", "yesterday"},
		{"report", "--brokers", "127.0.0.1:1", "--topic", "logs", "--idle", "1s"},
		{"watch", "--brokers", "127.0.0.1:1", "--topic", "logs", "--from-start"},
		{"replay", "--brokers", "127.0.0.1:1", "--topic", "logs", "--keep-order"},
	} {
		t.Run(strings.Join(args, " "), func(t *testing.T) {
			if code, _, errs := run(t, "", args...); code != ExitUsage || errs == "" {
				t.Errorf("exit %d, stderr %q; want a usage error", code, errs)
			}
		})
	}
	// Credentials missing: said without any secret, before any connection.
	t.Setenv("BITSIFT_KAFKA_USER", "")
	t.Setenv("BITSIFT_KAFKA_PASSWORD", "")
	for _, args := range [][]string{
		{"report", "--brokers", "127.0.0.1:1", "--topic", "logs", "--sasl", "scram-sha-256"},
		{"report", "--brokers", "127.0.0.1:1", "--topic", "logs", "--sasl", "plain", "--sasl-file", cred},
	} {
		code, _, errs := run(t, "", args...)
		if code != ExitUnreadable || !strings.Contains(strings.ToLower(errs), "password") {
			t.Errorf("%v: exit %d, stderr %q; want exit 2 naming the missing password", args, code, errs)
		}
	}
}
