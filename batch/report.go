package batch

import (
	"bytes"
	"fmt"
	"html/template"
	"math"
	"path/filepath"
	"strconv"

	"github.com/sweepstat/sweepstat/studies"
	"github.com/sweepstat/sweepstat/summarize"
)

// reportData is what report.html shows.
type reportData struct {
	Info       *Info
	Study      *studies.Study
	Convention string
	Summary    []summarize.SummaryRow
	Tornado    []summarize.TornadoRow
	Spearman   []summarize.SpearmanRow
	Sobol      []summarize.SobolRow
	Curves     []summarize.CurveRow
	Keys       map[string]bool // outputs whose tornado is shown
}

func (d *reportData) ConventionText() string {
	if d.Convention == studies.PercentilesCumulative {
		return "Percentiles are cumulative: P90 is the 90th percentile, the value exceeded with 10 % probability (the high estimate)."
	}
	return "Percentiles follow the reserves convention (SPE-PRMS 2018): P90 is the value exceeded with 90 % probability (the low estimate, the 10th percentile of the distribution); P10 is the high estimate."
}

var reportTemplate = template.Must(template.New("report").Funcs(template.FuncMap{
	"num": fmtNum,
}).Parse(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>{{.Study.Name}} — sweepstat report</title>
<style>
body { font-family: system-ui, -apple-system, "Segoe UI", sans-serif; margin: 2rem auto; max-width: 70rem; padding: 0 1rem; color: #1b1b1b; line-height: 1.45; }
h1 { font-size: 1.6rem; margin-bottom: 0.2rem; }
h2 { font-size: 1.2rem; margin-top: 2rem; border-bottom: 1px solid #ccc; padding-bottom: 0.2rem; }
.caution { border-left: 4px solid #0072B2; background: #eef5fb; padding: 0.6rem 1rem; margin: 1rem 0; }
table { border-collapse: collapse; font-size: 0.88rem; margin: 0.5rem 0 1rem; }
th, td { padding: 0.2rem 0.6rem; text-align: right; border-bottom: 1px solid #e4e4e4; }
th:first-child, td:first-child, td.name { text-align: left; }
thead th { border-bottom: 2px solid #888; }
dl.facts { display: grid; grid-template-columns: max-content auto; gap: 0.1rem 1rem; }
dl.facts dt { font-weight: 600; }
dl.facts dd { margin: 0; font-family: ui-monospace, monospace; }
@media print { body { margin: 0; max-width: none; } h2 { break-after: avoid; } table { break-inside: avoid; } }
</style>
</head>
<body>
<h1>{{.Study.Name}}</h1>
<p>{{.Study.Phases.Injected}} displacing {{.Study.Phases.Displaced}} — one-dimensional Buckley–Leverett screening study</p>
<div class="caution"><strong>Caution.</strong> {{.Info.Caution}}</div>

<h2>Run</h2>
<dl class="facts">
<dt>study file</dt><dd>{{.Info.Source}}</dd>
<dt>study hash (SHA-256)</dt><dd>{{.Info.StudyHash}}</dd>
<dt>seed</dt><dd>{{.Info.Seed}}</dd>
<dt>sampling</dt><dd>{{.Info.Sampling}}</dd>
<dt>cases</dt><dd>{{.Info.Cases}}</dd>
<dt>rejected cases</dt><dd>{{.Info.Rejected}}</dd>
<dt>version</dt><dd>{{.Info.Version}}</dd>
<dt>started (UTC)</dt><dd>{{.Info.Started}}</dd>
</dl>
<p>{{.ConventionText}}</p>

<h2>Summary</h2>
<table>
<thead><tr><th>output</th><th>n</th><th>rejected</th><th>mean</th><th>sd</th><th>P90</th><th>P50</th><th>P10</th><th>Swanson mean</th><th>P50 95 % interval</th></tr></thead>
<tbody>
{{range .Summary}}<tr><td>{{.Output}}</td><td>{{.N}}</td><td>{{.NRejected}}</td><td>{{num .Mean}}</td><td>{{num .SD}}</td><td>{{num .P90}}</td><td>{{num .P50}}</td><td>{{num .P10}}</td><td>{{num .SwansonMean}}</td><td>{{num .P50Low}} – {{num .P50High}}</td></tr>
{{end}}</tbody>
</table>

{{if .Curves}}<h2>Recovery and cut by pore volumes injected</h2>
<table>
<thead><tr><th>PVI</th><th>recovery P90</th><th>recovery P50</th><th>recovery P10</th><th>cut P90</th><th>cut P50</th><th>cut P10</th></tr></thead>
<tbody>
{{range .Curves}}<tr><td>{{num .PVI}}</td><td>{{num .RecoveryP90}}</td><td>{{num .RecoveryP50}}</td><td>{{num .RecoveryP10}}</td><td>{{num .CutP90}}</td><td>{{num .CutP50}}</td><td>{{num .CutP10}}</td></tr>
{{end}}</tbody>
</table>{{end}}

<h2>Tornado</h2>
<p>Each uncertain parameter alone at its {{num .Study.Tornado.Low}} and {{num .Study.Tornado.High}} quantiles, every other at its median; ranked by swing.</p>
<table>
<thead><tr><th>output</th><th>rank</th><th>parameter</th><th>input low</th><th>input base</th><th>input high</th><th>output at low</th><th>output base</th><th>output at high</th><th>swing</th></tr></thead>
<tbody>
{{range .Tornado}}{{if index $.Keys .Output}}<tr><td>{{.Output}}</td><td>{{.Rank}}</td><td class="name">{{.Parameter}}</td><td>{{num .InputLow}}</td><td>{{num .InputBase}}</td><td>{{num .InputHigh}}</td><td>{{num .OutputAtLow}}</td><td>{{num .OutputBase}}</td><td>{{num .OutputAtHigh}}</td><td>{{num .Swing}}</td></tr>
{{end}}{{end}}</tbody>
</table>

<h2>Rank correlation of outputs with inputs (Spearman)</h2>
<table>
<thead><tr><th>output</th><th>parameter</th><th>Spearman ρ</th><th>n</th></tr></thead>
<tbody>
{{range .Spearman}}{{if index $.Keys .Output}}<tr><td>{{.Output}}</td><td class="name">{{.Parameter}}</td><td>{{num .Spearman}}</td><td>{{.N}}</td></tr>
{{end}}{{end}}</tbody>
</table>

{{if .Sobol}}<h2>Variance-based sensitivity (Sobol indices)</h2>
<p>Saltelli (2010) first-order and Jansen total indices with bootstrap 95 % bounds, inputs sampled independently from their marginals.</p>
<table>
<thead><tr><th>output</th><th>parameter</th><th>first order</th><th>bounds</th><th>total</th><th>bounds</th></tr></thead>
<tbody>
{{range .Sobol}}{{if index $.Keys .Output}}<tr><td>{{.Output}}</td><td class="name">{{.Parameter}}</td><td>{{num .First}}</td><td>{{num .FirstLow}} – {{num .FirstHigh}}</td><td>{{num .Total}}</td><td>{{num .TotalLow}} – {{num .TotalHigh}}</td></tr>
{{end}}{{end}}</tbody>
</table>{{end}}

<p><small>sweepstat {{.Info.Version}}. The outputs beside this file (cases.arrow, summary.arrow, tornado.arrow, sensitivity.arrow, curves.arrow, run.json) hold every number shown here.</small></p>
</body>
</html>
`))

// fmtNum prints a number with four significant digits, NaN as "–".
func fmtNum(v float64) string {
	switch {
	case math.IsNaN(v):
		return "–"
	case math.IsInf(v, 1):
		return "∞"
	case math.IsInf(v, -1):
		return "−∞"
	}
	return strconv.FormatFloat(v, 'g', 4, 64)
}

// writeReportHTML renders report.html into dir.
func writeReportHTML(dir string, d *reportData) error {
	var buf bytes.Buffer
	if err := reportTemplate.Execute(&buf, d); err != nil {
		return fmt.Errorf("rendering %s: %w", ReportFile, err)
	}
	return writeFileAtomic(filepath.Join(dir, ReportFile), buf.Bytes())
}
