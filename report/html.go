package report

import (
	"fmt"
	"html/template"
	"io"
	"math"

	"bitsift/plan"
	"bitsift/sanitize"
)

// WriteHTML writes one self-contained page (no script, font or style from
// elsewhere) with the fields table, the pair heat map as inline SVG and a
// drop plan: p when given (a measured plan, from bitsift plan), else the
// plan chosen from the model alone when r was built. Every string from the
// log is HTML-escaped by html/template.
func WriteHTML(w io.Writer, r *Report, p *plan.Plan) error {
	given := p != nil
	if p == nil && r.snap != nil {
		p = plan.Choose(r.snap, plan.Options{})
	}
	v := htmlData(r, p)
	if !given {
		// The page is a report that carries a plan, not a plan.
		v.Title = "bitsift report"
	}
	v.Changes = htmlChangesOf(r)
	return htmlPage.Execute(w, v)
}

type htmlView struct {
	Title   string
	R       *Report
	Window  string
	Fields  []htmlField
	Heat    *heatMap
	Plan    *htmlPlan
	Caution string
	Changes htmlChanges
}

type htmlField struct {
	Name, Kind, Best, Left, Dist string
	Bits, BytesPerRecord         string
}

type htmlPlan struct {
	P        *plan.Plan
	Measured *plan.Measurement
	Saved    plan.Size
	PerDay   string
	Fields   []htmlPlanField
	Notes    []string
}

type htmlPlanField struct {
	Name, Action, From, Reason                 string
	Bits, Huffman, Lost, BytesPerRecord, Value string
	Table                                      int
	// Mismatches is "not measured" for a plan chosen from the figures
	// alone: 0 would read as verified.
	Mismatches string
}

func htmlData(r *Report, p *plan.Plan) *htmlView {
	v := &htmlView{Title: "bitsift report", R: r, Window: windowText(r.Window), Caution: plan.Caution}
	for _, f := range r.Fields {
		hf := htmlField{Name: sanitize.String(f.Name), Kind: f.Kind, Best: sanitize.String(f.BestGiven),
			Bits: fmt.Sprintf("%.3f", f.Entropy), BytesPerRecord: fmt.Sprintf("%.1f", f.BytesPerRecord),
			Dist: fmt.Sprint(f.Distinct)}
		if f.Estimate {
			hf.Dist = "~" + hf.Dist
		}
		hf.Left = left(f.Residual, "%.3f")
		v.Fields = append(v.Fields, hf)
	}
	v.Heat = buildHeat(r)
	if p != nil {
		v.Title = "bitsift drop plan"
		hp := &htmlPlan{P: p, Measured: p.Measured}
		if p.Measured != nil {
			hp.Saved = p.Measured.Saved()
		}
		if d, ok := p.SavedPerDay(); ok {
			hp.PerDay = fmt.Sprintf("%s raw, %s compressed per day at %.4g records/s",
				plan.Bytes(d.Raw), plan.Bytes(d.Compressed), p.RecordsPerSecond)
		}
		for _, n := range p.Notes {
			hp.Notes = append(hp.Notes, sanitize.String(n))
		}
		for _, f := range p.Fields {
			pf := htmlPlanField{Name: sanitize.String(f.Name), Action: string(f.Action), Reason: sanitize.String(f.Reason),
				Bits: fmt.Sprintf("%.3f", f.Entropy), Huffman: fmt.Sprintf("%.3f", f.Huffman),
				Lost: fmt.Sprintf("%.3f", f.BitsLost), BytesPerRecord: fmt.Sprintf("%.1f", f.BytesPerRecord),
				Table: f.TableEntries, Mismatches: "not measured", Value: sanitize.String(f.Value)}
			if p.Measured != nil {
				pf.Mismatches = fmt.Sprint(f.Mismatches)
			}
			for i, s := range f.From {
				if i > 0 {
					pf.From += ", "
				}
				pf.From += sanitize.String(s)
			}
			if f.Pin != plan.Unpinned {
				pf.Action += " (pinned)"
			}
			hp.Fields = append(hp.Fields, pf)
		}
		v.Plan = hp
	}
	return v
}

// heatMap is the matrix of H(row|col)/H(row): the share of a field's bits
// that another leaves unexplained (0: col determines row; 1: col tells
// nothing about it).
type heatMap struct {
	Size, Cell, Margin int
	Labels             []heatLabel
	Cells              []heatCell
}

type heatLabel struct {
	Name string
	X, Y int
}

type heatCell struct {
	X, Y, Size int
	Fill       string
	Title      string
}

func buildHeat(r *Report) *heatMap {
	type key struct{ t, g string }
	cond := map[key]float64{}
	has := map[string]bool{}
	for _, p := range r.Pairs {
		cond[key{p.Target, p.Given}] = p.Conditional
		has[p.Target], has[p.Given] = true, true
	}
	var names []string
	ent := map[string]float64{}
	for _, f := range r.Fields {
		if has[f.Name] && f.Entropy > 0 && f.Kind != "identifier" {
			names = append(names, f.Name)
			ent[f.Name] = f.Entropy
		}
	}
	if len(names) < 2 {
		return nil
	}
	const cell, margin = 22, 130
	h := &heatMap{Cell: cell, Margin: margin, Size: margin + cell*len(names) + 10}
	for i, n := range names {
		label := sanitize.Fit(n, 22)
		h.Labels = append(h.Labels, heatLabel{label, margin - 6, margin + i*cell + cell*3/4})
	}
	for i, row := range names {
		for j, col := range names {
			c := heatCell{X: margin + j*cell, Y: margin + i*cell, Size: cell - 1}
			switch c2, ok := cond[key{row, col}]; {
			case i == j:
				c.Fill, c.Title = "#ffffff", sanitize.String(row)
			case !ok:
				c.Fill, c.Title = "#d9d9d9", sanitize.String(row)+" | "+sanitize.String(col)+": not measured"
			default:
				share := math.Min(math.Max(c2/ent[row], 0), 1)
				c.Fill = heatColour(share)
				c.Title = fmt.Sprintf("H(%s | %s) = %.3f bits, %.0f%% of H(%s) = %.3f",
					sanitize.String(row), sanitize.String(col), c2, 100*share, sanitize.String(row), ent[row])
			}
			h.Cells = append(h.Cells, c)
		}
	}
	return h
}

// heatColour runs from a deep teal (0: determined) to near white (1).
func heatColour(share float64) string {
	l := 22 + 73*share
	return fmt.Sprintf("hsl(184, 60%%, %.0f%%)", l)
}

var htmlPage = template.Must(template.New("page").Parse(`<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<title>{{.Title}}</title>
<style>
body { font: 14px/1.45 system-ui, sans-serif; margin: 2em auto; max-width: 72em; color: #1c2326; padding: 0 1em; }
h1 { font-size: 1.5em; margin-bottom: 0.2em; }
h2 { font-size: 1.15em; margin-top: 2em; border-bottom: 1px solid #c8d0d3; }
table { border-collapse: collapse; font-variant-numeric: tabular-nums; }
th, td { padding: 0.2em 0.7em; border-bottom: 1px solid #e4e8ea; text-align: left; }
td.n { text-align: right; }
th { background: #eef2f3; }
tr.drop td, tr.derive td { background: #fbf3e4; }
.caution { border-left: 4px solid #b3541e; background: #fdf0e8; padding: 0.6em 1em; }
.meta { color: #4d5b61; }
svg text { font: 11px system-ui, sans-serif; fill: #1c2326; }
</style>
</head>
<body>
<header>
<h1>{{.Title}}</h1>
<p class="meta">{{.R.Records}} records in window {{.Window}}; {{.R.Lines}} lines read, {{.R.Rejected}} rejected; format {{.R.Input.Format}}.{{range .R.Input.Sources}} Source: {{.}}.{{end}}</p>
</header>
<section id="fields">
<h2>Fields</h2>
<table id="fields-table">
<thead><tr><th>field</th><th>kind</th><th>bits</th><th>distinct</th><th>best given</th><th>H(F|G) bits</th><th>bytes/record</th></tr></thead>
<tbody>
{{range .Fields}}<tr><td>{{.Name}}</td><td>{{.Kind}}</td><td class="n">{{.Bits}}</td><td class="n">{{.Dist}}</td><td>{{.Best}}</td><td class="n">{{.Left}}</td><td class="n">{{.BytesPerRecord}}</td></tr>
{{end}}</tbody>
</table>
<p class="meta">bits: entropy H(F) per record; H(F|G): bits of the field left once the best given field is known.</p>
</section>
<section id="pairs">
<h2>What each field leaves unexplained</h2>
{{with .Heat}}<svg id="pair-heatmap" xmlns="http://www.w3.org/2000/svg" width="{{.Size}}" height="{{.Size}}" viewBox="0 0 {{.Size}} {{.Size}}" role="img" aria-label="heat map of H(row|column)/H(row)">
{{range .Labels}}<text x="{{.X}}" y="{{.Y}}" text-anchor="end">{{.Name}}</text>
<text transform="translate({{.Y}} {{.X}}) rotate(-60)" x="0" y="0" text-anchor="start">{{.Name}}</text>
{{end}}{{range .Cells}}<rect x="{{.X}}" y="{{.Y}}" width="{{.Size}}" height="{{.Size}}" fill="{{.Fill}}"><title>{{.Title}}</title></rect>
{{end}}</svg>
<p class="meta">Row field given column field: the share H(row|column)/H(row) of the row's bits the column leaves. Dark: the column determines the row; white: it tells nothing. Identifiers and constants are left out; hover a cell for the figures.</p>
{{else}}<p>Too few measured pairs for a heat map.</p>{{end}}
</section>
{{with .Changes}}{{if .Timeline}}<section id="timeline">
<h2>Timeline: what changed along the log, and when</h2>
<p class="meta">{{.Method}}</p>
{{if .Timeline.Rows}}<table id="timeline-table">
<thead><tr><th>kind</th><th>field</th><th>given</th><th>file</th><th>first line</th><th>first time</th><th>last line</th><th>last time</th><th>records</th></tr></thead>
<tbody>
{{range .Timeline.Rows}}<tr><td>{{.Kind}}</td><td>{{.Field}}</td><td>{{.Given}}</td><td>{{.File}}</td><td class="n">{{.FirstLine}}</td><td>{{.FirstTime}}</td><td class="n">{{.LastLine}}</td><td>{{.LastTime}}</td><td class="n">{{.Count}}</td></tr>
{{end}}</tbody>
</table>{{else}}<p>No rule broke and no field shifted, went or came.</p>{{end}}
</section>
{{end}}{{if .Baseline}}<section id="changes">
<h2>What changed against the baseline</h2>
<p class="meta">Baseline: {{.Baseline}}.</p>
{{if .Shifts}}<table id="shift-table">
<thead><tr><th>shifted field</th><th>JSD bits</th><th>ΔH bits</th><th>z</th></tr></thead>
<tbody>
{{range .Shifts}}<tr><td>{{.Name}}</td><td class="n">{{.JSD}}</td><td class="n">{{.DH}}</td><td class="n">{{.Z}}</td></tr>
{{end}}</tbody>
</table>{{else}}<p>No field's distribution shifted.</p>{{end}}
{{if .Broken}}<table id="broken-table">
<thead><tr><th>broken rule</th><th>bits then → now</th><th>records breaking it</th><th>given value</th><th>new value</th><th>was</th><th>count</th><th>newest at</th></tr></thead>
<tbody>
{{range .Broken}}<tr><td>{{.Rule}}</td><td class="n">{{.Bits}}</td><td class="n">{{.Violations}}</td><td>{{.Given}}</td><td>{{.New}}</td><td>{{.Was}}</td><td class="n">{{.Count}}</td><td>{{.Where}}</td></tr>
{{end}}</tbody>
</table>{{else}}<p>No rule of the baseline broke.</p>{{end}}
</section>
{{end}}{{if .Surprising}}<section id="surprising">
<h2>Most surprising records</h2>
<p class="meta">Bits of surprisal against {{.Against}}.</p>
<table id="surprising-table">
<thead><tr><th>file</th><th>line</th><th>time</th><th>bits</th><th>because</th><th>record</th></tr></thead>
<tbody>
{{range .Surprising}}<tr><td>{{.File}}</td><td class="n">{{.Line}}</td><td>{{.Time}}</td><td class="n">{{.Bits}}</td><td>{{.Because}}</td><td>{{.Record}}</td></tr>
{{end}}</tbody>
</table>
</section>
{{end}}{{end}}{{with .Plan}}<section id="plan">
<h2>Drop plan</h2>
<p class="caution">{{$.Caution}}</p>
<p>{{if .P.Lossless}}Lossless plan{{else}}Lossy plan: at most {{printf "%.3g" .P.BitsLost}} bits lost per record{{end}} (max loss {{.P.MaxLoss}} bits per record).
Entropy bound of the kept fields: {{printf "%.2f" .P.EntropyAfter}} bits per record ({{printf "%.2f" .P.EntropyBefore}} for all fields).</p>
{{with .Measured}}<table id="plan-sizes">
<thead><tr><th>bytes per record</th><th>raw</th><th>zstd</th></tr></thead>
<tbody>
<tr><td>before</td><td class="n">{{printf "%.1f" .Before.Raw}}</td><td class="n">{{printf "%.1f" .Before.Compressed}}</td></tr>
<tr><td>after (with tables)</td><td class="n">{{printf "%.1f" .After.Raw}}</td><td class="n">{{printf "%.1f" .After.Compressed}}</td></tr>
<tr><td>saved</td><td class="n">{{printf "%.1f" $.Plan.Saved.Raw}}</td><td class="n">{{printf "%.1f" $.Plan.Saved.Compressed}}</td></tr>
</tbody>
</table>
<p>Measured on the last {{.Records}} records, written as {{.Serialised}}; rebuilt from the tables with {{.Mismatches}} mismatches.
{{if $.Plan.PerDay}}Saved: {{$.Plan.PerDay}}.{{else}}Saving per day unknown: the records carry no timestamps.{{end}}</p>
{{else}}<p>Chosen from the model's figures alone, not measured: run <code>bitsift plan -o html</code> for sizes and the rebuild check.</p>{{end}}
<table id="plan-fields">
<thead><tr><th>field</th><th>action</th><th>from</th><th>bits</th><th>Huffman bits</th><th>bits lost</th><th>bytes/record</th><th>table rows</th><th>mismatches</th><th>why</th></tr></thead>
<tbody>
{{range .Fields}}<tr class="{{.Action}}"><td>{{.Name}}</td><td>{{.Action}}</td><td>{{.From}}</td><td class="n">{{.Bits}}</td><td class="n">{{.Huffman}}</td><td class="n">{{.Lost}}</td><td class="n">{{.BytesPerRecord}}</td><td class="n">{{.Table}}</td><td class="n">{{.Mismatches}}</td><td>{{.Reason}}{{if .Value}}: {{.Value}}{{end}}</td></tr>
{{end}}</tbody>
</table>
{{range .Notes}}<p class="meta">Note: {{.}}</p>
{{end}}</section>
{{end}}</body>
</html>
`))
