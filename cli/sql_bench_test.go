package cli

import (
	"os"
	"sort"
	"strconv"
	"syscall"
	"testing"
	"time"

	"bitsift/demo"
	"bitsift/internal/dbtest"
)

// selfCPU is this process's processor time (getrusage).
func selfCPU() time.Duration {
	var ru syscall.Rusage
	syscall.Getrusage(syscall.RUSAGE_SELF, &ru)
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

func median(xs []float64) float64 {
	s := append([]float64(nil), xs...)
	sort.Float64s(s)
	return s[len(s)/2]
}

// BenchmarkSQL runs bitsift sql on demo rows (BITSIFT_SQL_BENCH_ROWS,
// default 1,000,000) in a real PostgreSQL and ClickHouse, and as the
// baseline bitsift report on the same lines. It reports the medians over
// the iterations of the server's CPU seconds (the server process and its
// ended children, from /proc) and the client's (this process, getrusage):
//
//	go test -run '^$' -bench SQL -benchtime 3x ./cli/
func BenchmarkSQL(b *testing.B) {
	n := int64(1000000)
	if v, err := strconv.ParseInt(os.Getenv("BITSIFT_SQL_BENCH_ROWS"), 10, 64); err == nil && v > 0 {
		n = v
	}
	g := demo.New(1, n)
	path := b.TempDir() + "/demo.jsonl"
	f, err := os.Create(path)
	if err != nil {
		b.Fatal(err)
	}
	var chunks [][]byte
	for done := int64(0); done < n; {
		var buf []byte
		for i := 0; i < 100000 && done < n; i++ {
			buf = append(g.Append(buf), '\n')
			done++
		}
		f.Write(buf)
		chunks = append(chunks, buf)
	}
	f.Close()
	b.Run("report", func(b *testing.B) {
		var cpu []float64
		for i := 0; i < b.N; i++ {
			c0 := selfCPU()
			if code, _, errs := run(b, "", "report", "-o", "json", path); code != 0 {
				b.Fatal(errs)
			}
			cpu = append(cpu, (selfCPU() - c0).Seconds())
		}
		b.ReportMetric(median(cpu), "client-cpu-s")
	})
	for _, eng := range []struct {
		name  string
		start func(testing.TB) *dbtest.Server
		load  func(testing.TB, string, []demoRow, bool)
	}{
		{"postgres", func(t testing.TB) *dbtest.Server { return dbtest.Postgres(t, pgPing) }, loadPostgresChunk},
		{"clickhouse", func(t testing.TB) *dbtest.Server { return dbtest.ClickHouse(t, chPing) }, loadClickHouseChunk},
	} {
		b.Run(eng.name, func(b *testing.B) {
			srv := eng.start(b)
			for i, c := range chunks {
				eng.load(b, srv.DSN, demoRows(b, c), i == 0)
			}
			b.ResetTimer()
			var scpu, ccpu []float64
			for i := 0; i < b.N; i++ {
				s0, _ := srv.CPU()
				c0 := selfCPU()
				if code, _, errs := run(b, "", "sql", "--engine", eng.name, "--dsn", srv.DSN, "--table", "demo", "-o", "json"); code != 0 {
					b.Fatal(errs)
				}
				time.Sleep(100 * time.Millisecond) // let the backend end and be reaped: its CPU joins the postmaster's
				s1, _ := srv.CPU()
				scpu = append(scpu, (s1 - s0).Seconds())
				ccpu = append(ccpu, (selfCPU() - c0).Seconds())
			}
			b.ReportMetric(median(scpu), "server-cpu-s")
			b.ReportMetric(median(ccpu), "client-cpu-s")
		})
	}
}
