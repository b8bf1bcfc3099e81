// Package sqlsrc makes a count profile of a log table in a database: the
// engine does the counting, where the rows are, and bitsift receives count
// tables (model.CountTables) and computes every figure from them, exactly
// as from the same records read from a log.
//
// The steps, each one query or a few:
//
//  1. The table's columns (and, with Attrs, the keys of its attributes
//     column): each column or key is a field, its value cast to text. A NULL
//     is a value of its own, as an absent key is in a log line: both count
//     as "absent".
//  2. Classification with the engine's cheap distinct counts (ClickHouse
//     uniq, a HyperLogLog variant; PostgreSQL count(DISTINCT) over the first
//     rows): fields with many distinct values per row are identifier
//     candidates.
//  3. Each candidate is summarised on the server (exact distinct count,
//     Σ c·log2 c, the most frequent values and a bottom-k sketch of value
//     hashes: model.Summary); a candidate that is not an identifier by the
//     model's rule (model.IsIdentifier) rejoins the other fields.
//  4. One query returns the count table of every other field and of every
//     pair of them: GROUPING SETS on PostgreSQL, UNION ALL of GROUP BYs on
//     ClickHouse (the Debian package's 18.16 has no GROUPING SETS).
//     Identifiers are never paired: a pair has up to min(|A|·|B|, N) cells.
//  5. Companion fields that are a function of a value (numeric buckets) are
//     made from the tables, as ingest makes them from the first rows.
//
// Credentials never come from the command line: the DSN must not hold a
// password (PGPASSWORD, ~/.pgpass, CLICKHOUSE_PASSWORD or a password file
// do). Identifiers are quoted; Where is passed through as it is (it is the
// user's own SQL, run with the user's own rights).
package sqlsrc

import (
	"context"
	"errors"
	"fmt"
	"sort"
	"strings"
	"time"

	"bitsift/model"
	"bitsift/profile"
)

// Options say what to count.
type Options struct {
	Engine   string // "postgres" or "clickhouse"
	DSN      string
	Password string // from the environment or a file, never a flag
	Table    string // table, or schema.table / database.table
	Where    string // an SQL condition, passed through
	// TimeColumn is the records' time; Since and Until (either may be
	// zero) keep the rows with Since ≤ time < Until. Empty: found from the
	// column types (one timestamp column) or names (ts, time, timestamp).
	TimeColumn   string
	Since, Until time.Time
	Fields       []string // columns to read (default all)
	Attrs        string   // a Map(String,String) / Nested(key, value) / jsonb column of attributes
	SketchK      int      // bottom-k size of identifier summaries (default 65536)
	MaxPairs     int      // fields in pairs at most (default 64, as the model)
	// Progress, when set, is told what runs (it may be called from another
	// goroutine, at most a few times a second).
	Progress func(Progress)
}

// Progress is what a run is doing.
type Progress struct {
	Step    string
	Started time.Time
	Rows    uint64 // rows the server has read for this step, when it says
}

// column is a table column.
type column struct {
	name, typ string
}

// field is one field of the profile: a column or an attribute key.
type field struct {
	name string
	expr string // SQL giving its value as text, NULL when absent
	time bool
}

// engine is what differs between databases.
type engine interface {
	close()
	columns(ctx context.Context, table string) ([]column, error)
	quote(ident string) string
	quoteTable(table string) string
	literal(s string) string
	isTime(typ string) bool
	text(col column) string
	timeCond(col column, since, until time.Time) string
	attrKeys(ctx context.Context, from string, attrs column) ([]string, error)
	attrExpr(attrs column, key string) string
	count(ctx context.Context, from string) (int64, error)
	approx(ctx context.Context, from string, fs []field) (present, distinct []int64, err error)
	summary(ctx context.Context, from string, f field, k int) (*model.FieldCounts, error)
	sample(ctx context.Context, from string, fs []field, n int) ([][]*string, error)
	counts(ctx context.Context, from string, fs []field, sets [][2]int, emit func(set int, a, b *string, n int64)) error
	timeSpan(ctx context.Context, from string, f field) (lo, hi int64, err error)
	buckets(ctx context.Context, from string, f field, width int64) (map[int64]int64, error)
}

// ErrPasswordInDSN refuses a DSN that carries a password.
var ErrPasswordInDSN = errors.New("the DSN holds a password: give it in the environment or a file, never on the command line (it would show in ps and in shell history)")

func open(ctx context.Context, opt Options) (engine, error) {
	switch opt.Engine {
	case "postgres", "postgresql":
		return openPostgres(ctx, opt)
	case "clickhouse":
		return openClickHouse(ctx, opt)
	}
	return nil, fmt.Errorf("unknown engine %q (use clickhouse or postgres)", opt.Engine)
}

// run carries one profiling run.
type run struct {
	opt  Options
	e    engine
	from string // FROM ... WHERE ...
}

func (r *run) step(s string) {
	if r.opt.Progress != nil {
		r.opt.Progress(Progress{Step: s, Started: time.Now()})
	}
}

// Profile counts the table and returns its profile.
func Profile(ctx context.Context, opt Options) (*profile.Profile, error) {
	if opt.SketchK <= 0 {
		opt.SketchK = 1 << 16
	}
	if opt.MaxPairs <= 0 {
		opt.MaxPairs = 64
	}
	e, err := open(ctx, opt)
	if err != nil {
		return nil, err
	}
	defer e.close()
	r := &run{opt: opt, e: e}
	r.step("reading the table's columns")
	fs, timeCol, err := r.fields(ctx)
	if err != nil {
		return nil, err
	}
	conds := []string{}
	if opt.Where != "" {
		conds = append(conds, "("+opt.Where+")")
	}
	if !opt.Since.IsZero() || !opt.Until.IsZero() {
		if timeCol == nil {
			return nil, errors.New("--since/--until need a time column (--time-column)")
		}
		conds = append(conds, e.timeCond(*timeCol, opt.Since, opt.Until))
	}
	// Always a WHERE, so that a step can add " AND ...".
	conds = append([]string{"1 = 1"}, conds...)
	r.from = "FROM " + e.quoteTable(opt.Table) + " WHERE " + strings.Join(conds, " AND ")
	ct, err := r.tables(ctx, fs)
	if err != nil {
		return nil, err
	}
	p := &profile.Profile{Schema: profile.Schema, Format: "sql:" + opt.Engine, Confidence: 1, Measured: opt.Engine,
		Lines: ct.Records, RejectedExamples: []model.Rejection{}, Counts: ct}
	p.Companions = profile.CompanionsOf(ct)
	cov := profile.Coverage{Kind: "query", Source: opt.Engine + " " + opt.Table, Query: opt.Where}
	if !opt.Since.IsZero() {
		cov.Since = opt.Since.UTC().Format(time.RFC3339Nano)
	}
	if !opt.Until.IsZero() {
		cov.Until = opt.Until.UTC().Format(time.RFC3339Nano)
	}
	p.Coverage = []profile.Coverage{cov}
	for _, f := range fs {
		if f.time {
			p.TimeField = f.name
			r.step("counting rows per time bucket")
			if p.Buckets, err = r.timeBuckets(ctx, f, ct); err != nil {
				return nil, err
			}
		}
	}
	return p, nil
}

// fields lists the fields to count, and the time column.
func (r *run) fields(ctx context.Context) ([]field, *column, error) {
	cols, err := r.e.columns(ctx, r.opt.Table)
	if err != nil {
		return nil, nil, err
	}
	if len(cols) == 0 {
		return nil, nil, fmt.Errorf("table %s not found, or it has no columns", r.opt.Table)
	}
	byName := map[string]column{}
	for _, c := range cols {
		byName[c.name] = c
	}
	var timeCol *column
	if r.opt.TimeColumn != "" {
		c, ok := byName[r.opt.TimeColumn]
		if !ok {
			return nil, nil, fmt.Errorf("--time-column %q is not a column of %s", r.opt.TimeColumn, r.opt.Table)
		}
		timeCol = &c
	} else {
		timeCol = guessTime(cols, r.e)
	}
	var attrs *column
	skip := map[string]bool{}
	if a := r.opt.Attrs; a != "" {
		c, ok := byName[a]
		_, okK := byName[a+".key"]
		_, okV := byName[a+".value"]
		switch {
		case ok:
			attrs = &c
		case okK && okV: // a Nested(key, value): two arrays
			attrs = &column{name: a, typ: "Nested"}
			skip[a+".key"], skip[a+".value"] = true, true
		default:
			return nil, nil, fmt.Errorf("--attrs %q is not a column of %s (nor a Nested column with key and value)", a, r.opt.Table)
		}
		skip[a] = true
	}
	chosen := cols
	if len(r.opt.Fields) > 0 {
		chosen = nil
		for _, n := range r.opt.Fields {
			c, ok := byName[n]
			if !ok {
				return nil, nil, fmt.Errorf("--fields: %q is not a column of %s", n, r.opt.Table)
			}
			chosen = append(chosen, c)
		}
	}
	var fs []field
	names := map[string]bool{}
	for _, c := range chosen {
		if skip[c.name] {
			continue
		}
		fs = append(fs, field{name: c.name, expr: r.e.text(c), time: timeCol != nil && c.name == timeCol.name})
		names[c.name] = true
	}
	if attrs != nil {
		r.step("listing the attribute keys")
		keys, err := r.e.attrKeys(ctx, "FROM "+r.e.quoteTable(r.opt.Table)+" WHERE 1 = 1"+r.andWhere(), *attrs)
		if err != nil {
			return nil, nil, err
		}
		for _, k := range keys {
			name := k
			if names[name] {
				name = attrs.name + "." + k // a column has the key's name
			}
			fs = append(fs, field{name: name, expr: r.e.attrExpr(*attrs, k)})
			names[name] = true
		}
	}
	return fs, timeCol, nil
}

// andWhere is the user's condition alone (the time range is added later).
func (r *run) andWhere() string {
	if r.opt.Where == "" {
		return ""
	}
	return " AND (" + r.opt.Where + ")"
}

// guessTime picks the time column: the one timestamp-typed column, else a
// column with a usual time name.
func guessTime(cols []column, e engine) *column {
	var typed []column
	for _, c := range cols {
		if e.isTime(c.typ) {
			typed = append(typed, c)
		}
	}
	if len(typed) == 1 {
		return &typed[0]
	}
	for _, n := range []string{"ts", "time", "timestamp", "@timestamp", "event_time"} {
		for i, c := range cols {
			if strings.EqualFold(c.name, n) {
				return &cols[i]
			}
		}
	}
	return nil
}

// candidateRatio: in step 2 a field with at least this many distinct values
// per present row is summarised (and rejoins the others when its exact
// counts say it is no identifier); lower than the rule's 0.5, as the
// engines' counts are approximate.
const candidateRatio = 0.25

// tables runs steps 2–5.
func (r *run) tables(ctx context.Context, fs []field) (*model.CountTables, error) {
	r.step("counting rows")
	n, err := r.e.count(ctx, r.from)
	if err != nil {
		return nil, err
	}
	ct := &model.CountTables{Records: n}
	r.step("classifying fields by approximate distinct counts")
	present, distinct, err := r.e.approx(ctx, r.from, fs)
	if err != nil {
		return nil, err
	}
	tabs := make([]*model.FieldCounts, len(fs))
	var full []int
	for i, f := range fs {
		if present[i] >= 32 && float64(distinct[i]) >= candidateRatio*float64(present[i]) {
			r.step("summarising " + f.name + " on the server")
			fc, err := r.e.summary(ctx, r.from, f, r.opt.SketchK)
			if err != nil {
				return nil, err
			}
			fc.Name, fc.Absent = f.name, n-fc.Summary.Present
			if model.IsIdentifier(fc.Summary.Distinct, fc.Summary.Present) {
				fc.Ident, fc.Timestamp = true, f.time
				tabs[i] = fc
				continue
			}
		}
		full = append(full, i)
	}
	// Pairs among the fields with full tables, the time field left out
	// (as the model leaves the stream's timestamp out of pairs).
	var sets [][2]int
	var paired []int
	for _, i := range full {
		sets = append(sets, [2]int{i, -1})
		if !fs[i].time && len(paired) < r.opt.MaxPairs {
			paired = append(paired, i)
		}
	}
	for x, i := range paired {
		for _, j := range paired[x+1:] {
			sets = append(sets, [2]int{i, j})
		}
	}
	r.step(fmt.Sprintf("counting %d fields and %d pairs in one query", len(full), len(sets)-len(full)))
	b := newBuilder(fs, paired)
	if err := r.e.counts(ctx, r.from, fs, sets, func(set int, a, bv *string, c int64) {
		b.add(sets[set], a, bv, c)
	}); err != nil {
		return nil, err
	}
	for _, i := range full {
		fc := b.field(i, n)
		tabs[i] = fc
	}
	for _, t := range tabs {
		ct.Fields = append(ct.Fields, *t)
	}
	ct.Pairs = b.pairs()
	r.step("making companion fields")
	if err := r.companions(ctx, fs, ct); err != nil {
		return nil, err
	}
	return ct, nil
}

// timeBuckets counts rows per time bucket on the server.
func (r *run) timeBuckets(ctx context.Context, f field, ct *model.CountTables) (*profile.Buckets, error) {
	lo, hi, err := r.e.timeSpan(ctx, r.from, f)
	if err != nil || lo == 0 {
		return nil, err
	}
	ct.Oldest, ct.Newest = lo, hi
	w := profile.BucketWidth(lo, hi)
	m, err := r.e.buckets(ctx, r.from, f, w)
	if err != nil {
		return nil, err
	}
	return profile.BucketsOf(w, m), nil
}

// sortedKeys returns m's keys in order.
func sortedKeys(m map[string]int64) []string {
	ks := make([]string, 0, len(m))
	for k := range m {
		ks = append(ks, k)
	}
	sort.Strings(ks)
	return ks
}

// sampleQuery selects the first n rows of fs's expressions.
func sampleQuery(from string, fs []field, n int) string {
	sel := make([]string, len(fs))
	for i, f := range fs {
		sel[i] = f.expr
	}
	return fmt.Sprintf("SELECT %s %s LIMIT %d", strings.Join(sel, ", "), from, n)
}

// rowScanner is what pgx's and clickhouse-go's result rows share.
type rowScanner interface {
	Next() bool
	Scan(dest ...any) error
	Err() error
}

// scanStrings reads every row of width columns as nullable strings (nil
// for NULL).
func scanStrings(rows rowScanner, width int) ([][]*string, error) {
	var out [][]*string
	for rows.Next() {
		row := make([]*string, width)
		dest := make([]any, width)
		for i := range row {
			dest[i] = &row[i]
		}
		if err := rows.Scan(dest...); err != nil {
			return nil, err
		}
		out = append(out, row)
	}
	return out, rows.Err()
}
