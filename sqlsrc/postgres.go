package sqlsrc

import (
	"context"
	"fmt"
	"net/url"
	"strings"
	"time"

	"github.com/jackc/pgx/v5"

	"bitsift/model"
)

// postgres counts in PostgreSQL through pgx. Values are cast to text in
// the server's own text form (TimeZone set to UTC for the session).
type postgres struct {
	conn *pgx.Conn
}

// dsnHasPassword says whether a DSN (URL or key=value form) holds one.
func dsnHasPassword(dsn string) bool {
	if u, err := url.Parse(dsn); err == nil && u.User != nil {
		if _, ok := u.User.Password(); ok {
			return true
		}
	}
	if u, err := url.Parse(dsn); err == nil && u.Query().Get("password") != "" {
		return true
	}
	for _, kv := range strings.Fields(dsn) {
		if strings.HasPrefix(strings.ToLower(kv), "password=") {
			return true
		}
	}
	return false
}

func openPostgres(ctx context.Context, opt Options) (engine, error) {
	if dsnHasPassword(opt.DSN) {
		return nil, ErrPasswordInDSN
	}
	cfg, err := pgx.ParseConfig(opt.DSN)
	if err != nil {
		return nil, fmt.Errorf("postgres: %v", err)
	}
	if opt.Password != "" {
		cfg.Password = opt.Password
	}
	cfg.RuntimeParams["TimeZone"] = "UTC"
	cfg.RuntimeParams["application_name"] = "bitsift"
	conn, err := pgx.ConnectConfig(ctx, cfg)
	if err != nil {
		return nil, fmt.Errorf("postgres: %v", err)
	}
	return &postgres{conn: conn}, nil
}

func (p *postgres) close() { p.conn.Close(context.Background()) }

func (p *postgres) quote(id string) string { return `"` + strings.ReplaceAll(id, `"`, `""`) + `"` }

func (p *postgres) quoteTable(t string) string {
	if s, n, ok := strings.Cut(t, "."); ok {
		return p.quote(s) + "." + p.quote(n)
	}
	return p.quote(t)
}

func (p *postgres) literal(s string) string { return "'" + strings.ReplaceAll(s, "'", "''") + "'" }

func (p *postgres) isTime(typ string) bool {
	return strings.HasPrefix(typ, "timestamp") || typ == "date"
}

func (p *postgres) text(c column) string { return "(" + p.quote(c.name) + ")::text" }

func (p *postgres) columns(ctx context.Context, table string) ([]column, error) {
	schema, name, ok := strings.Cut(table, ".")
	if !ok {
		schema, name = "", table
	}
	rows, err := p.conn.Query(ctx, `SELECT column_name, data_type FROM information_schema.columns
		WHERE table_schema = COALESCE(NULLIF($1, ''), current_schema()) AND table_name = $2 ORDER BY ordinal_position`, schema, name)
	if err != nil {
		return nil, fmt.Errorf("postgres: %v", err)
	}
	var out []column
	for rows.Next() {
		var c column
		if err := rows.Scan(&c.name, &c.typ); err != nil {
			return nil, err
		}
		out = append(out, c)
	}
	return out, rows.Err()
}

func (p *postgres) timeCond(c column, since, until time.Time) string {
	e := p.quote(c.name)
	if !p.isTime(c.typ) {
		e = "(" + e + ")::timestamptz"
	}
	var cs []string
	if !since.IsZero() {
		cs = append(cs, e+" >= "+p.literal(since.UTC().Format(time.RFC3339Nano))+"::timestamptz")
	}
	if !until.IsZero() {
		cs = append(cs, e+" < "+p.literal(until.UTC().Format(time.RFC3339Nano))+"::timestamptz")
	}
	return strings.Join(cs, " AND ")
}

func (p *postgres) attrKeys(ctx context.Context, from string, attrs column) ([]string, error) {
	q := `SELECT k, count(*) FROM (SELECT ` + p.quote(attrs.name) + `::jsonb AS a ` + from + ` AND jsonb_typeof(` +
		p.quote(attrs.name) + `::jsonb) = 'object') s, jsonb_object_keys(s.a) k GROUP BY k ORDER BY count(*) DESC, k LIMIT 1000`
	rows, err := p.conn.Query(ctx, q)
	if err != nil {
		return nil, fmt.Errorf("postgres: attribute keys of %s: %v", attrs.name, err)
	}
	var keys []string
	for rows.Next() {
		var k string
		var n int64
		if err := rows.Scan(&k, &n); err != nil {
			return nil, err
		}
		keys = append(keys, k)
	}
	return keys, rows.Err()
}

func (p *postgres) attrExpr(attrs column, key string) string {
	return "(" + p.quote(attrs.name) + "::jsonb ->> " + p.literal(key) + ")"
}

func (p *postgres) count(ctx context.Context, from string) (int64, error) {
	var n int64
	err := p.conn.QueryRow(ctx, "SELECT count(*) "+from).Scan(&n)
	return n, pgErr(err)
}

func pgErr(err error) error {
	if err == nil {
		return nil
	}
	return fmt.Errorf("postgres: %v", err)
}

// approxRows is how many rows PostgreSQL's distinct counts look at: it has
// no cheap distinct estimator over a query, so step 2 counts the first
// rows exactly.
const approxRows = 100000

func (p *postgres) approx(ctx context.Context, from string, fs []field) ([]int64, []int64, error) {
	var sel, inner []string
	for i, f := range fs {
		c := fmt.Sprintf("c%d", i)
		inner = append(inner, f.expr+" AS "+c)
		sel = append(sel, "count("+c+")", "count(DISTINCT "+c+")")
	}
	q := fmt.Sprintf("SELECT %s FROM (SELECT %s %s LIMIT %d) s", strings.Join(sel, ", "), strings.Join(inner, ", "), from, approxRows)
	vals := make([]int64, 2*len(fs))
	dest := make([]any, len(vals))
	for i := range vals {
		dest[i] = &vals[i]
	}
	if err := p.conn.QueryRow(ctx, q).Scan(dest...); err != nil {
		return nil, nil, pgErr(err)
	}
	present, distinct := make([]int64, len(fs)), make([]int64, len(fs))
	for i := range fs {
		present[i], distinct[i] = vals[2*i], vals[2*i+1]
	}
	return present, distinct, nil
}

// summary: one statement, the value table grouped once (MATERIALIZED),
// then its totals, its top values and the K smallest hashes. A hash is the
// first 16 hex digits of md5 as a bigint; ordering by it with the sign bit
// flipped is ordering by the unsigned value.
func (p *postgres) summary(ctx context.Context, from string, f field, k int) (*model.FieldCounts, error) {
	q := fmt.Sprintf(`WITH g AS MATERIALIZED (SELECT %s AS v, count(*) AS c %s GROUP BY 1)
(SELECT 0 AS part, NULL::text AS v, count(*)::bigint AS h, coalesce(sum(c), 0)::bigint AS c,
	coalesce(sum(c * ln(c)) / ln(2), 0)::float8 AS x, coalesce(sum(octet_length(v) * c), 0)::bigint AS y FROM g WHERE v IS NOT NULL)
UNION ALL
(SELECT 1, v, 0, c, 0, 0 FROM g WHERE v IS NOT NULL ORDER BY c DESC, v COLLATE "C" LIMIT %d)
UNION ALL
(SELECT 2, NULL, ('x' || substr(md5(v), 1, 16))::bit(64)::bigint AS h, c, 0, 0 FROM g WHERE v IS NOT NULL
	ORDER BY (('x' || substr(md5(v), 1, 16))::bit(64)::bigint # (-9223372036854775807 - 1)) LIMIT %d)`,
		f.expr, from, model.SummaryTop, k)
	rows, err := p.conn.Query(ctx, q)
	if err != nil {
		return nil, pgErr(err)
	}
	fc := &model.FieldCounts{Values: []string{}, Counts: []int64{}, Summary: &model.Summary{K: k}}
	for rows.Next() {
		var part int
		var v *string
		var h, c, y int64
		var x float64
		if err := rows.Scan(&part, &v, &h, &c, &x, &y); err != nil {
			return nil, pgErr(err)
		}
		switch part {
		case 0:
			fc.Summary.Distinct, fc.Summary.Present, fc.Summary.CLogC, fc.Bytes = h, c, x, y
		case 1:
			fc.Values, fc.Counts = append(fc.Values, *v), append(fc.Counts, c)
		case 2:
			fc.Summary.Hashes, fc.Summary.Counts = append(fc.Summary.Hashes, uint64(h)), append(fc.Summary.Counts, c)
		}
	}
	if err := rows.Err(); err != nil {
		return nil, pgErr(err)
	}
	fc.Summary.Complete = fc.Summary.Distinct <= int64(k)
	return fc, nil
}

func (p *postgres) sample(ctx context.Context, from string, fs []field, n int) ([][]*string, error) {
	rows, err := p.conn.Query(ctx, sampleQuery(from, fs, n))
	if err != nil {
		return nil, pgErr(err)
	}
	out, err := scanStrings(rows, len(fs))
	return out, pgErr(err)
}

// counts runs one GROUPING SETS query. GROUPING(...) takes at most 31
// arguments (its bits make an integer), so it is asked for in chunks; a
// field is in a row's set when its bit is 0.
func (p *postgres) counts(ctx context.Context, from string, fs []field, sets [][2]int, emit func(int, *string, *string, int64)) error {
	var cols []int
	pos := map[int]int{}
	for _, s := range sets {
		for _, i := range s {
			if _, ok := pos[i]; i >= 0 && !ok {
				pos[i] = len(cols)
				cols = append(cols, i)
			}
		}
	}
	var inner, names, gs, groups []string
	for x, i := range cols {
		c := fmt.Sprintf("c%d", x)
		inner = append(inner, fs[i].expr+" AS "+c)
		names = append(names, c)
	}
	for x := 0; x < len(names); x += 31 {
		gs = append(gs, "GROUPING("+strings.Join(names[x:min(x+31, len(names))], ", ")+")")
	}
	setOf := map[[2]int]int{}
	for si, s := range sets {
		if s[1] < 0 {
			groups = append(groups, "("+names[pos[s[0]]]+")")
			setOf[[2]int{pos[s[0]], -1}] = si
		} else {
			groups = append(groups, "("+names[pos[s[0]]]+", "+names[pos[s[1]]]+")")
			setOf[[2]int{pos[s[0]], pos[s[1]]}] = si
		}
	}
	q := fmt.Sprintf("SELECT %s, %s, count(*) FROM (SELECT %s %s) s GROUP BY GROUPING SETS (%s)",
		strings.Join(gs, ", "), strings.Join(names, ", "), strings.Join(inner, ", "), from, strings.Join(groups, ", "))
	rows, err := p.conn.Query(ctx, q)
	if err != nil {
		return pgErr(err)
	}
	g := make([]int32, len(gs))
	vals := make([]*string, len(names))
	var n int64
	dest := make([]any, 0, len(g)+len(vals)+1)
	for i := range g {
		dest = append(dest, &g[i])
	}
	for i := range vals {
		dest = append(dest, &vals[i])
	}
	dest = append(dest, &n)
	for rows.Next() {
		if err := rows.Scan(dest...); err != nil {
			return pgErr(err)
		}
		in := [2]int{-1, -1}
		k := 0
		for x := range names {
			chunk, bit := x/31, min(31, len(names)-x/31*31)-1-x%31
			if g[chunk]>>bit&1 == 0 && k < 2 {
				in[k] = x
				k++
			}
		}
		si, ok := setOf[in]
		if !ok {
			return fmt.Errorf("postgres: a row of an unknown grouping set %v", in)
		}
		emit(si, vals[in[0]], valOr(vals, in[1]), n)
	}
	return pgErr(rows.Err())
}

func valOr(vals []*string, i int) *string {
	if i < 0 {
		return nil
	}
	return vals[i]
}

func (p *postgres) timeExpr(f field) string {
	return "(" + f.expr + ")::timestamptz"
}

func (p *postgres) timeSpan(ctx context.Context, from string, f field) (int64, int64, error) {
	e := p.timeExpr(f)
	var lo, hi *int64
	err := p.conn.QueryRow(ctx, fmt.Sprintf("SELECT (extract(epoch FROM min(%s)) * 1000000000)::bigint, (extract(epoch FROM max(%s)) * 1000000000)::bigint %s", e, e, from)).Scan(&lo, &hi)
	if err != nil || lo == nil || hi == nil {
		return 0, 0, pgErr(err)
	}
	return *lo, *hi, nil
}

func (p *postgres) buckets(ctx context.Context, from string, f field, w int64) (map[int64]int64, error) {
	q := fmt.Sprintf("SELECT (floor(extract(epoch FROM %s) * 1000000000 / %d) * %d)::bigint AS b, count(*) %s GROUP BY 1",
		p.timeExpr(f), w, w, from)
	rows, err := p.conn.Query(ctx, q)
	if err != nil {
		return nil, pgErr(err)
	}
	out := map[int64]int64{}
	for rows.Next() {
		var b *int64
		var n int64
		if err := rows.Scan(&b, &n); err != nil {
			return nil, pgErr(err)
		}
		if b != nil {
			out[*b] += n
		}
	}
	return out, pgErr(rows.Err())
}
