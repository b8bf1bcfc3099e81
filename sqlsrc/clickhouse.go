package sqlsrc

import (
	"context"
	"fmt"
	"strings"
	"sync/atomic"
	"time"

	"github.com/ClickHouse/clickhouse-go/v2"
	"github.com/ClickHouse/clickhouse-go/v2/lib/driver"

	"bitsift/model"
)

// clickHouse counts in ClickHouse over the native protocol (clickhouse-go
// v2; its HTTP transport sends settings that 18.16 does not know). The
// count tables come from a UNION ALL of GROUP BYs, which every version
// runs; GROUPING SETS (22.6 and later) would read the table once instead
// of once per set, and is not used because it could not be tested here.
type clickHouse struct {
	conn     driver.Conn
	progress func(Progress)
	rows     atomic.Uint64
}

func openClickHouse(ctx context.Context, opt Options) (engine, error) {
	o, err := clickhouse.ParseDSN(opt.DSN)
	if err != nil {
		return nil, fmt.Errorf("clickhouse: %v", err)
	}
	if o.Auth.Password != "" {
		return nil, ErrPasswordInDSN
	}
	o.Auth.Password = opt.Password
	o.MaxOpenConns = 1
	conn, err := clickhouse.Open(o)
	if err != nil {
		return nil, fmt.Errorf("clickhouse: %v", err)
	}
	if err := conn.Ping(ctx); err != nil {
		conn.Close()
		return nil, fmt.Errorf("clickhouse: %v", err)
	}
	return &clickHouse{conn: conn, progress: opt.Progress}, nil
}

func (c *clickHouse) close() { c.conn.Close() }

// ctx adds the progress callback: the server reports rows read as a
// query runs.
func (c *clickHouse) ctx(ctx context.Context) context.Context {
	c.rows.Store(0)
	return clickhouse.Context(ctx, clickhouse.WithProgress(func(p *clickhouse.Progress) {
		n := c.rows.Add(p.Rows)
		if c.progress != nil {
			c.progress(Progress{Rows: n})
		}
	}))
}

func (c *clickHouse) query(ctx context.Context, q string, args ...any) (driver.Rows, error) {
	rows, err := c.conn.Query(c.ctx(ctx), q, args...)
	if err != nil {
		return nil, fmt.Errorf("clickhouse: %v", err)
	}
	return rows, nil
}

func chErr(err error) error {
	if err == nil {
		return nil
	}
	return fmt.Errorf("clickhouse: %v", err)
}

func (c *clickHouse) quote(id string) string {
	r := strings.NewReplacer(`\`, `\\`, "`", "\\`")
	return "`" + r.Replace(id) + "`"
}

func (c *clickHouse) quoteTable(t string) string {
	if d, n, ok := strings.Cut(t, "."); ok {
		return c.quote(d) + "." + c.quote(n)
	}
	return c.quote(t)
}

func (c *clickHouse) literal(s string) string {
	r := strings.NewReplacer(`\`, `\\`, `'`, `\'`)
	return "'" + r.Replace(s) + "'"
}

func (c *clickHouse) isTime(typ string) bool {
	typ = strings.TrimSuffix(strings.TrimPrefix(typ, "Nullable("), ")")
	return strings.HasPrefix(typ, "DateTime") || typ == "Date"
}

func (c *clickHouse) text(col column) string {
	return "toNullable(toString(" + c.quote(col.name) + "))"
}

func (c *clickHouse) columns(ctx context.Context, table string) ([]column, error) {
	db, name, ok := strings.Cut(table, ".")
	if !ok {
		db, name = "", table
	}
	rows, err := c.query(ctx, "SELECT name, type FROM system.columns WHERE database = if(? = '', currentDatabase(), ?) AND table = ?", db, db, name)
	if err != nil {
		return nil, err
	}
	var out []column
	for rows.Next() {
		var col column
		if err := rows.Scan(&col.name, &col.typ); err != nil {
			return nil, chErr(err)
		}
		out = append(out, col)
	}
	return out, chErr(rows.Err())
}

func (c *clickHouse) timeExpr(col column) string {
	if c.isTime(col.typ) {
		return c.quote(col.name)
	}
	return "parseDateTimeBestEffort(toString(" + c.quote(col.name) + "))"
}

func (c *clickHouse) timeCond(col column, since, until time.Time) string {
	e := c.timeExpr(col)
	var cs []string
	if !since.IsZero() {
		cs = append(cs, e+" >= toDateTime("+c.literal(since.UTC().Format(time.DateTime))+", 'UTC')")
	}
	if !until.IsZero() {
		cs = append(cs, e+" < toDateTime("+c.literal(until.UTC().Format(time.DateTime))+", 'UTC')")
	}
	return strings.Join(cs, " AND ")
}

// keysOf is the array of an attributes column's keys: mapKeys of a Map,
// the key array of a Nested(key, value).
func (c *clickHouse) keysOf(attrs column) string {
	if strings.HasPrefix(attrs.typ, "Map(") {
		return "mapKeys(" + c.quote(attrs.name) + ")"
	}
	return c.quote(attrs.name + ".key")
}

func (c *clickHouse) attrKeys(ctx context.Context, from string, attrs column) ([]string, error) {
	q := "SELECT k, count() AS n FROM (SELECT " + c.keysOf(attrs) + " AS ks " + from + ") ARRAY JOIN ks AS k GROUP BY k ORDER BY n DESC, k LIMIT 1000"
	rows, err := c.query(ctx, q)
	if err != nil {
		return nil, err
	}
	var keys []string
	for rows.Next() {
		var k string
		var n uint64
		if err := rows.Scan(&k, &n); err != nil {
			return nil, chErr(err)
		}
		keys = append(keys, k)
	}
	return keys, chErr(rows.Err())
}

func (c *clickHouse) attrExpr(attrs column, key string) string {
	k := c.literal(key)
	if strings.HasPrefix(attrs.typ, "Map(") {
		m := c.quote(attrs.name)
		return "if(mapContains(" + m + ", " + k + "), toNullable(" + m + "[" + k + "]), CAST(NULL AS Nullable(String)))"
	}
	ks, vs := c.quote(attrs.name+".key"), c.quote(attrs.name+".value")
	return "if(has(" + ks + ", " + k + "), toNullable(" + vs + "[indexOf(" + ks + ", " + k + ")]), CAST(NULL AS Nullable(String)))"
}

func (c *clickHouse) count(ctx context.Context, from string) (int64, error) {
	var n uint64
	err := c.conn.QueryRow(c.ctx(ctx), "SELECT count() "+from).Scan(&n)
	return int64(n), chErr(err)
}

func (c *clickHouse) approx(ctx context.Context, from string, fs []field) ([]int64, []int64, error) {
	var sel []string
	for _, f := range fs {
		sel = append(sel, "count("+f.expr+")", "ifNull(uniq("+f.expr+"), 0)")
	}
	vals := make([]uint64, 2*len(fs))
	dest := make([]any, len(vals))
	for i := range vals {
		dest[i] = &vals[i]
	}
	if err := c.conn.QueryRow(c.ctx(ctx), "SELECT "+strings.Join(sel, ", ")+" "+from).Scan(dest...); err != nil {
		return nil, nil, chErr(err)
	}
	present, distinct := make([]int64, len(fs)), make([]int64, len(fs))
	for i := range fs {
		present[i], distinct[i] = int64(vals[2*i]), int64(vals[2*i+1])
	}
	return present, distinct, nil
}

// summary: the field's value table grouped on the server, read three
// times (ClickHouse 18.16 has no common table expressions to keep it):
// totals, the top values, the K smallest hashes. A hash is the first 8
// bytes of MD5 read big-endian (model.SketchHash).
func (c *clickHouse) summary(ctx context.Context, from string, f field, k int) (*model.FieldCounts, error) {
	sub := "(SELECT assumeNotNull(v) AS v, c FROM (SELECT " + f.expr + " AS v, count() AS c " + from + " GROUP BY v) WHERE isNotNull(v))"
	fc := &model.FieldCounts{Values: []string{}, Counts: []int64{}, Summary: &model.Summary{K: k}}
	var d, present, bytes uint64
	var cl float64
	err := c.conn.QueryRow(c.ctx(ctx), "SELECT count(), sum(c), sum(c * log2(c)), sum(length(v) * c) FROM "+sub).Scan(&d, &present, &cl, &bytes)
	if err != nil {
		return nil, chErr(err)
	}
	fc.Summary.Distinct, fc.Summary.Present, fc.Summary.CLogC, fc.Bytes = int64(d), int64(present), cl, int64(bytes)
	rows, err := c.query(ctx, fmt.Sprintf("SELECT v, c FROM %s ORDER BY c DESC, v LIMIT %d", sub, model.SummaryTop))
	if err != nil {
		return nil, err
	}
	for rows.Next() {
		var v string
		var n uint64
		if err := rows.Scan(&v, &n); err != nil {
			return nil, chErr(err)
		}
		fc.Values, fc.Counts = append(fc.Values, v), append(fc.Counts, int64(n))
	}
	if err := rows.Err(); err != nil {
		return nil, chErr(err)
	}
	rows, err = c.query(ctx, fmt.Sprintf("SELECT reinterpretAsUInt64(reverse(substring(MD5(v), 1, 8))) AS h, c FROM %s ORDER BY h LIMIT %d", sub, k))
	if err != nil {
		return nil, err
	}
	for rows.Next() {
		var h, n uint64
		if err := rows.Scan(&h, &n); err != nil {
			return nil, chErr(err)
		}
		fc.Summary.Hashes, fc.Summary.Counts = append(fc.Summary.Hashes, h), append(fc.Summary.Counts, int64(n))
	}
	fc.Summary.Complete = fc.Summary.Distinct <= int64(k)
	return fc, chErr(rows.Err())
}

func (c *clickHouse) sample(ctx context.Context, from string, fs []field, n int) ([][]*string, error) {
	rows, err := c.query(ctx, sampleQuery(from, fs, n))
	if err != nil {
		return nil, err
	}
	out, err := scanStrings(rows, len(fs))
	return out, chErr(err)
}

// counts runs one query: a UNION ALL of one GROUP BY per set, each tagged
// with its set's number.
func (c *clickHouse) counts(ctx context.Context, from string, fs []field, sets [][2]int, emit func(int, *string, *string, int64)) error {
	var parts []string
	for si, s := range sets {
		if s[1] < 0 {
			parts = append(parts, fmt.Sprintf("SELECT toUInt32(%d) AS s, a, CAST(NULL AS Nullable(String)) AS b, count() AS n FROM (SELECT %s AS a %s) GROUP BY a",
				si, fs[s[0]].expr, from))
		} else {
			parts = append(parts, fmt.Sprintf("SELECT toUInt32(%d) AS s, a, b, count() AS n FROM (SELECT %s AS a, %s AS b %s) GROUP BY a, b",
				si, fs[s[0]].expr, fs[s[1]].expr, from))
		}
	}
	rows, err := c.query(ctx, strings.Join(parts, "\nUNION ALL\n"))
	if err != nil {
		return err
	}
	for rows.Next() {
		var s uint32
		var a, b *string
		var n uint64
		if err := rows.Scan(&s, &a, &b, &n); err != nil {
			return chErr(err)
		}
		if int(s) >= len(sets) {
			return fmt.Errorf("clickhouse: a row of an unknown set %d", s)
		}
		emit(int(s), a, b, int64(n))
	}
	return chErr(rows.Err())
}

// timeOf is a field's time in seconds (18.16's DateTime has no fraction).
func (c *clickHouse) timeOf(f field) string {
	return "toUInt64(toUnixTimestamp(parseDateTimeBestEffort(assumeNotNull(" + f.expr + "))))"
}

func (c *clickHouse) timeSpan(ctx context.Context, from string, f field) (int64, int64, error) {
	var lo, hi uint64
	e := c.timeOf(f)
	err := c.conn.QueryRow(c.ctx(ctx), "SELECT min("+e+"), max("+e+") "+from+" AND isNotNull("+f.expr+")").Scan(&lo, &hi)
	if err != nil {
		return 0, 0, chErr(err)
	}
	return int64(lo) * 1e9, int64(hi) * 1e9, nil
}

func (c *clickHouse) buckets(ctx context.Context, from string, f field, w int64) (map[int64]int64, error) {
	ws := max(w/1e9, 1)
	rows, err := c.query(ctx, fmt.Sprintf("SELECT intDiv(%s, %d) * %d AS b, count() AS n %s AND isNotNull(%s) GROUP BY b", c.timeOf(f), ws, ws, from, f.expr))
	if err != nil {
		return nil, err
	}
	out := map[int64]int64{}
	for rows.Next() {
		var b, n uint64
		if err := rows.Scan(&b, &n); err != nil {
			return nil, chErr(err)
		}
		out[int64(b)*1e9] += int64(n)
	}
	return out, chErr(rows.Err())
}
