package cli

import (
	"context"
	"fmt"
	"io"
	"os"
	"strings"
	"sync"
	"time"

	"github.com/mattn/go-isatty"
	"github.com/spf13/cobra"

	"bitsift/report"
	"bitsift/sqlsrc"
)

type sqlCmd struct {
	opt          sqlsrc.Options
	since, until string
	passwordFile string
	output       string
	prof         profileFlags
}

func newSQLCmd(std IO) *cobra.Command {
	c := &sqlCmd{}
	cmd := &cobra.Command{
		Use:   "sql --engine clickhouse|postgres --dsn DSN --table T [flags]",
		Short: "Count a log table in ClickHouse or PostgreSQL and print its report",
		Long: `sql lets the database count: it asks ClickHouse or PostgreSQL for the value
counts of every column (and of every key of an attributes column) and of every
pair of them, in one query, with identifier columns summarised on the server,
and computes the report from those counts: the same figures as bitsift report
on the same records, without moving the rows.

A NULL counts as a value of its own, as an absent key does in a log line.
--since and --until select rows by the time column; --where adds any SQL
condition (passed to the database as it is).

The DSN must not hold a password: PostgreSQL reads PGPASSWORD or ~/.pgpass,
ClickHouse reads CLICKHOUSE_PASSWORD; or give --password-file FILE.`,
		Example: `  bitsift sql --engine clickhouse --dsn clickhouse://reader@127.0.0.1:9000/logs --table app_logs --since 24h
  bitsift sql --engine postgres --dsn postgres://reader@db/logs --table app_logs --attrs attributes -o json
  bitsift sql --engine postgres --dsn postgres://reader@db/logs --table app_logs --where "service = 'quay'" --profile-out quay.bsp`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return c.run(cmd.Context(), std)
		},
	}
	fs := cmd.Flags()
	fs.StringVar(&c.opt.Engine, "engine", "", "clickhouse or postgres")
	fs.StringVar(&c.opt.DSN, "dsn", "", "database address, without a password (postgres://user@host/db, clickhouse://user@host:9000/db)")
	fs.StringVar(&c.opt.Table, "table", "", "the log table (table or schema.table)")
	fs.StringVar(&c.opt.Where, "where", "", "an SQL condition on the rows, passed through")
	fs.StringVar(&c.opt.TimeColumn, "time-column", "", "the rows' time column (default: the one timestamp column, or ts/time/timestamp)")
	fs.StringVar(&c.since, "since", "", "rows at or after this time (RFC 3339, 2006-01-02, or a duration ago: 24h)")
	fs.StringVar(&c.until, "until", "", "rows before this time (as --since)")
	fs.StringSliceVar(&c.opt.Fields, "fields", nil, "columns to read (comma-separated; default all)")
	fs.StringVar(&c.opt.Attrs, "attrs", "", "a column of attributes (ClickHouse Map(String,String) or Nested(key, value); PostgreSQL jsonb): each key is a field")
	fs.StringVar(&c.passwordFile, "password-file", "", "read the password from FILE (first line)")
	fs.StringVarP(&c.output, "output", "o", "text", "output format: "+strings.Join(report.Formats, ", "))
	c.prof.register(cmd)
	return cmd
}

// parseWhen reads --since/--until.
func parseWhen(s string, now time.Time) (time.Time, error) {
	if s == "" {
		return time.Time{}, nil
	}
	for _, layout := range []string{time.RFC3339Nano, "2006-01-02T15:04:05", time.DateTime, time.DateOnly} {
		if t, err := time.ParseInLocation(layout, s, time.UTC); err == nil {
			return t, nil
		}
	}
	if d, err := time.ParseDuration(s); err == nil && d > 0 {
		return now.Add(-d), nil
	}
	return time.Time{}, fmt.Errorf("%q is not a time (RFC 3339, 2006-01-02) or a duration ago (24h)", s)
}

func (c *sqlCmd) run(ctx context.Context, std IO) error {
	switch {
	case c.opt.Engine == "" || c.opt.DSN == "" || c.opt.Table == "":
		return usage("sql: --engine, --dsn and --table are needed")
	case c.opt.Engine != "clickhouse" && c.opt.Engine != "postgres":
		return usage("sql: --engine %q: use clickhouse or postgres", c.opt.Engine)
	case !validOutput(c.output):
		return usage("sql: unknown output format %q (use one of %s)", c.output, strings.Join(report.Formats, ", "))
	}
	now := time.Now()
	var err error
	if c.opt.Since, err = parseWhen(c.since, now); err != nil {
		return usage("sql: --since %v", err)
	}
	if c.opt.Until, err = parseWhen(c.until, now); err != nil {
		return usage("sql: --until %v", err)
	}
	if c.passwordFile != "" {
		b, err := os.ReadFile(c.passwordFile)
		if err != nil {
			return usage("sql: --password-file: %v", err)
		}
		c.opt.Password, _, _ = strings.Cut(strings.TrimRight(string(b), "\r\n"), "\n")
	} else if c.opt.Engine == "clickhouse" {
		c.opt.Password = os.Getenv("CLICKHOUSE_PASSWORD")
	}
	c.opt.SketchK = c.prof.sketch
	pr := newProgressLine(std.Err)
	c.opt.Progress = pr.update
	p, err := sqlsrc.Profile(ctx, c.opt)
	pr.stop()
	if err != nil {
		if ctx.Err() != nil {
			return &ExitError{Code: ExitUnreadable, Err: fmt.Errorf("sql: interrupted: %v", ctx.Err())}
		}
		return &ExitError{Code: ExitUnreadable, Err: fmt.Errorf("sql: %v", err)}
	}
	return reportProfile(std, p, c.output, c.prof.out)
}

// progressLine shows on standard error what a query does and for how long:
// redrawn in place on a terminal, a line per step otherwise.
type progressLine struct {
	w     io.Writer
	tty   bool
	mu    sync.Mutex
	cur   sqlsrc.Progress
	since time.Time
	done  chan struct{}
	wg    sync.WaitGroup
}

func newProgressLine(w io.Writer) *progressLine {
	p := &progressLine{w: w, done: make(chan struct{})}
	if f, ok := w.(*os.File); ok && isatty.IsTerminal(f.Fd()) {
		p.tty = true
		p.wg.Add(1)
		go p.loop()
	}
	return p
}

func (p *progressLine) update(pr sqlsrc.Progress) {
	p.mu.Lock()
	defer p.mu.Unlock()
	if pr.Step == "" { // rows read within the step
		p.cur.Rows = pr.Rows
		return
	}
	p.cur, p.since = pr, pr.Started
	if !p.tty {
		fmt.Fprintf(p.w, "bitsift sql: %s\n", pr.Step)
	}
}

func (p *progressLine) loop() {
	defer p.wg.Done()
	t := time.NewTicker(250 * time.Millisecond)
	defer t.Stop()
	for {
		select {
		case <-p.done:
			fmt.Fprint(p.w, "\r\x1b[K")
			return
		case <-t.C:
			p.mu.Lock()
			s := fmt.Sprintf("\r\x1b[Kbitsift sql: %s · %.1fs", p.cur.Step, time.Since(p.since).Seconds())
			if p.cur.Rows > 0 {
				s += fmt.Sprintf(" · %d rows read", p.cur.Rows)
			}
			p.mu.Unlock()
			fmt.Fprint(p.w, s)
		}
	}
}

func (p *progressLine) stop() {
	close(p.done)
	p.wg.Wait()
}
