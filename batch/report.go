package batch

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"html/template"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"github.com/apache/arrow/go/v17/arrow/memory"

	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/sampler"
	"github.com/sweepstat/sweepstat/studies"
	"github.com/sweepstat/sweepstat/summarize"
)

// ChartsDir is the folder of a study's output folder that holds every
// chart of the report as an SVG file.
const ChartsDir = "charts"

// ReportOptions configures [Report]. Its fields are those of the command
// line's options for the folder commands, so that one converts to the
// other.
type ReportOptions struct {
	// Workers is accepted for symmetry with the other folder commands; the
	// report reads its files on one goroutine.
	Workers  int
	Progress Progress // nil for none
	Version  string   // program version, printed in the report's footer
}

// Report writes report.html and the charts of every study output folder
// under dir again from the files in it: run.json, study.yaml (the study
// file, checked against run.json's study hash), cases.arrow and the
// summary tables. dir is either one study's output folder or the parent
// folder of several (the --out folder of `sweepstat run`, whose
// non-hidden subfolders holding a run.json are the studies). Charts the
// new report does not use are removed from charts/, and run.json's file
// list and SHA-256 sums are brought up to date; nothing else changes. Each
// file is replaced whole when complete.
//
// Memory: the report holds at most two columns of cases.arrow at a time,
// plus the first CorrelationMaxRows cases of every uncertain input.
//
// A folder that cannot be rebuilt does not stop the others; the error
// returned joins every folder's error. It is an error when dir holds no
// study outputs at all.
func Report(ctx context.Context, dir string, opt ReportOptions) error {
	folders, err := studyFolders(dir)
	if err != nil {
		return err
	}
	var errs []error
	for _, f := range folders {
		if err := ctx.Err(); err != nil {
			return err
		}
		if err := rebuildReport(ctx, f, opt); err != nil {
			if ctx.Err() != nil {
				return ctx.Err()
			}
			errs = append(errs, fmt.Errorf("report of %s: %w", f, err))
		}
	}
	return errors.Join(errs...)
}

// studyFolders returns dir when it is a study output folder, else its
// non-hidden subfolders that are, in name order.
func studyFolders(dir string) ([]string, error) {
	if _, err := os.Stat(filepath.Join(dir, RunFile)); err == nil {
		return []string{dir}, nil
	}
	ents, err := os.ReadDir(dir)
	if err != nil {
		return nil, err
	}
	var out []string
	for _, e := range ents {
		if !e.IsDir() || strings.HasPrefix(e.Name(), ".") {
			continue
		}
		sub := filepath.Join(dir, e.Name())
		if _, err := os.Stat(filepath.Join(sub, RunFile)); err == nil {
			out = append(out, sub)
		}
	}
	if len(out) == 0 {
		return nil, fmt.Errorf("%s holds no study outputs (no %s in it or in its folders)", dir, RunFile)
	}
	return out, nil
}

func rebuildReport(ctx context.Context, dir string, opt ReportOptions) error {
	mem := memory.DefaultAllocator
	st, data, err := loadFolder(dir, mem)
	if err != nil {
		return err
	}
	design, err := NewDesign(st)
	if err != nil {
		return err
	}
	files, err := writeReport(ctx, dir, st, design, data, mem, opt.Progress, opt.Version)
	if err != nil {
		return err
	}
	if err := removeStaleCharts(dir, files); err != nil {
		return err
	}
	return updateRunFile(dir, data.Info, files)
}

// updateRunFile rewrites run.json after the report files were written
// again: its file list names the new charts and its checksums are those
// of the new files.
func updateRunFile(dir string, info *Info, written []string) error {
	var files []string
	for _, f := range info.Files {
		if f == RunFile || f == ReportFile || strings.HasPrefix(f, ChartsDir+"/") {
			continue
		}
		files = append(files, f)
	}
	files = append(append(files, written...), RunFile)
	sums := make(map[string]string, len(files))
	for _, f := range files[:len(files)-1] {
		if sum, ok := info.SHA256[f]; ok && !slices.Contains(written, f) {
			sums[f] = sum
			continue
		}
		sum, _, err := fileSHA256(filepath.Join(dir, f))
		if err != nil {
			return err
		}
		sums[f] = sum
	}
	info.Files, info.SHA256 = files, sums
	js, err := json.MarshalIndent(info, "", "  ")
	if err != nil {
		return err
	}
	return writeFileAtomic(filepath.Join(dir, RunFile), append(js, '\n'))
}

// removeStaleCharts deletes the SVG files of the charts folder that the
// report just written does not use.
func removeStaleCharts(dir string, files []string) error {
	ents, err := os.ReadDir(filepath.Join(dir, ChartsDir))
	if err != nil {
		return nil
	}
	for _, e := range ents {
		rel := ChartsDir + "/" + e.Name()
		if strings.HasSuffix(e.Name(), ".svg") && !slices.Contains(files, rel) {
			if err := os.Remove(filepath.Join(dir, ChartsDir, e.Name())); err != nil {
				return err
			}
		}
	}
	return nil
}

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

	// stats are the column statistics the summaries computed, which the
	// charts reuse; nil when the report is rebuilt from the files.
	stats *caseStats

	// Filled by writeReport.
	Builder   string // version of the program writing the report
	Charts    *chartData
	Figures   figures
	Headline  []headline
	CaseTable caseTable
	Units     map[string]string // output column → unit
	Model     []fact            // how the cases were modelled
}

// fact is one term and its description in the report's run facts.
type fact struct{ Term, Text string }

// modelFacts describes the study's relative-permeability model and its
// volumes section.
func modelFacts(st *studies.Study) []fact {
	m := st.Model()
	var out []fact
	switch m.Family {
	case engine.FamilyCorey:
		out = append(out, fact{"relative permeability", "Corey power laws, exponents n1 and n2 (Corey 1954)"})
	case engine.FamilyLET:
		out = append(out, fact{"relative permeability", "LET correlation, parameters let_l1 … let_t2 (Lomeland, Ebeltoft & Thomas 2005)"})
	case engine.FamilyTable:
		var names []string
		for i, t := range m.Tables {
			names = append(names, strconv.Itoa(i+1)+" "+t.Name())
		}
		ends := "re-scaled to each case's s1r, s2r, kr1_max and kr2_max (two-point end-point scaling)"
		if m.TableEnds == [4]bool{true, true, true, true} {
			ends = "at each sample's own end points"
		} else if m.TableEnds != [4]bool{} {
			ends = "with the end points the study gives re-scaled and the others at each sample's own"
		}
		out = append(out, fact{"relative permeability", "measured curves from " + st.Relperm.Table + " (copy: " + TableFile +
			"), monotone piecewise-cubic interpolation (Fritsch & Carlson 1980; Fritsch & Butland 1984 slopes), " + ends + "; rock samples " + strings.Join(names, ", ")})
	}
	v := m.Volumes
	if v == nil {
		return append(out, fact{"units", "dimensionless: saturations and recoveries as fractions, time in pore volumes injected (PVI)"})
	}
	rate := "constant rate_m3_per_day (reservoir m³/day)"
	if v.Schedule != nil {
		steps := make([]string, len(v.Schedule))
		for i, s := range v.Schedule {
			steps[i] = "from day " + fmtNum(s.FromDay) + " " + fmtNum(s.M3PerDay) + " m³/day"
		}
		rate = "schedule: " + strings.Join(steps, "; ")
	}
	units := "days, pore volume in reservoir m³, produced " + st.Phases.Displaced + " in m³ at surface conditions (reservoir m³ / b2)"
	if v.FieldUnits {
		units += " and in barrels (1 bbl = 0.158987294928 m³, NIST SP 811)"
	}
	flux := "velocity_m_per_day as given"
	if v.VelocityFromRate {
		flux = "rate_m3_per_day / area_m2"
	}
	return append(out,
		fact{"injection", rate + "; pore volume = length_m × area_m2 × porosity"},
		fact{"units", units},
		fact{"flux in the gravity number", flux},
	)
}

// figure is one chart as the report places it.
type figure struct {
	ID      string
	Wide    bool   // spans the whole row
	File    string // path relative to the study folder, charts/….svg
	Caption string
	SVG     template.HTML
}

// figures are the charts of the report by section.
type figures struct {
	Exceed, Bands, Tornado, FracFlow, Profiles, Hist []figure
	Corr                                             []figure
}

// headline is one output's P90, P50 and P10 in large type.
type headline struct {
	Title, Unit   string
	P90, P50, P10 float64
	N             int
}

// caseTable lists the inputs of the P90, P50 and P10 cases.
type caseTable struct {
	Head []string
	Rows [][]string
}

func (d *reportData) ConventionText() string {
	if d.Convention == studies.PercentilesCumulative {
		return "Percentiles are cumulative: P90 is the 90th percentile, the value exceeded with 10 % probability (the high estimate)."
	}
	return "Percentiles follow the reserves convention (SPE-PRMS 2018): P90 is the value exceeded with 90 % probability (the low estimate, the 10th percentile of the distribution); P10 is the high estimate."
}

// SobolNote states the assumption behind the Sobol indices.
func (d *reportData) SobolNote() string { return summarize.SobolAssumption }

// Phrase returns the friendly name of an output column.
func (d *reportData) Phrase(name string) string { return words{d.Study}.output(name) }

var reportTemplate = template.Must(template.New("report").Funcs(template.FuncMap{
	"num":   fmtNum,
	"card":  cardNum,
	"count": groupDigits,
	"pct":   func(v float64) string { return strconv.FormatFloat(100*v, 'g', 3, 64) },
	"lower": lowerFirst,
}).Parse(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>{{.Study.Name}} · sweepstat report</title>
<style>
:root { --ink: #1b1b1b; --muted: #5a5a5a; --rule: #d9d9d9; --tint: #f5f7f9; --accent: #0072B2; }
* { box-sizing: border-box; }
body { font-family: system-ui, -apple-system, "Segoe UI", Roboto, "DejaVu Sans", Arial, sans-serif; margin: 0 auto; max-width: 78rem; padding: 1.5rem 1.25rem 3rem; color: var(--ink); line-height: 1.45; background: #fff; }
header { border-bottom: 3px solid var(--accent); padding-bottom: 0.6rem; }
h1 { font-size: 1.75rem; margin: 0 0 0.2rem; letter-spacing: -0.01em; }
.lede { margin: 0; color: var(--muted); }
h2 { font-size: 1.25rem; margin: 2.2rem 0 0.4rem; padding-bottom: 0.2rem; border-bottom: 1px solid var(--rule); }
h3 { font-size: 1rem; margin: 1.4rem 0 0.3rem; }
p.note { color: var(--muted); font-size: 0.92rem; max-width: 52rem; margin: 0.3rem 0 0.8rem; }
.caution { border-left: 5px solid #E69F00; background: #fdf6e6; padding: 0.7rem 1rem; margin: 1.1rem 0; max-width: 60rem; }
dl.facts { display: grid; grid-template-columns: max-content auto; gap: 0.15rem 1.2rem; margin: 0.6rem 0; }
dl.facts dt { color: var(--muted); }
dl.facts dd { margin: 0; font-family: ui-monospace, "DejaVu Sans Mono", monospace; font-size: 0.9rem; overflow-wrap: anywhere; }
.cards { display: grid; grid-template-columns: repeat(auto-fit, minmax(20rem, 1fr)); gap: 1rem; margin: 0.6rem 0; }
.card { background: var(--tint); border-radius: 6px; padding: 0.8rem 1rem; }
.card h3 { margin: 0 0 0.5rem; font-size: 0.98rem; }
.card .trio { display: grid; grid-template-columns: repeat(3, 1fr); gap: 0.5rem; }
.card .trio div { text-align: center; }
.card .v { display: block; font-size: 1.45rem; font-weight: 600; font-variant-numeric: tabular-nums; }
.card .k { font-size: 0.8rem; color: var(--muted); }
.card .unit { font-size: 0.8rem; color: var(--muted); margin: 0.4rem 0 0; }
.figs { display: grid; grid-template-columns: repeat(auto-fill, minmax(27rem, 1fr)); gap: 1.2rem 1.6rem; margin: 0.8rem 0; }
.figs.small { grid-template-columns: repeat(auto-fill, minmax(19rem, 1fr)); }
figure { margin: 0; break-inside: avoid; }
figure.wide { grid-column: 1 / -1; max-width: 54rem; }
figure svg { display: block; width: 100%; height: auto; border: 1px solid #eee; border-radius: 4px; }
figcaption { font-size: 0.82rem; color: var(--muted); margin-top: 0.25rem; }
figcaption a { color: var(--muted); }
.scroll { overflow-x: auto; }
table { border-collapse: collapse; font-size: 0.86rem; margin: 0.5rem 0 1rem; font-variant-numeric: tabular-nums; }
th, td { padding: 0.22rem 0.6rem; text-align: right; border-bottom: 1px solid #e6e6e6; white-space: nowrap; }
th:first-child, td:first-child, td.name, th.name { text-align: left; }
td.name, td:first-child { font-family: ui-monospace, "DejaVu Sans Mono", monospace; font-size: 0.82rem; }
thead th { border-bottom: 2px solid #888; font-weight: 600; }
tbody tr:nth-child(even) { background: #fafafa; }
footer { margin-top: 2.5rem; padding-top: 0.6rem; border-top: 1px solid var(--rule); color: var(--muted); font-size: 0.85rem; }
@media print {
  @page { size: A4; margin: 12mm; }
  html { font-size: 9.5pt; }
  body { max-width: none; padding: 0; }
  h2 { break-after: avoid; margin-top: 1.2rem; }
  .figs { grid-template-columns: 1fr; gap: 0.6rem; }
  .figs figure { width: 82%; }
  .figs.small { grid-template-columns: 1fr 1fr; gap: 0.6rem 1rem; }
  .figs.small figure { width: auto; }
  th, td { white-space: normal; padding: 0.12rem 0.35rem; }
  figure svg { border: none; }
  table, .card, .caution { break-inside: avoid; }
  .scroll { overflow: visible; }
  a { color: inherit; text-decoration: none; }
}
</style>
</head>
<body>
<header>
<h1>{{.Study.Name}}</h1>
<p class="lede">{{.Study.Phases.Injected}} displacing {{.Study.Phases.Displaced}} · one-dimensional Buckley–Leverett screening study · {{count .Info.Cases}} cases</p>
</header>
<div class="caution"><strong>Caution.</strong> {{.Info.Caution}}</div>

<section id="run">
<h2>Run</h2>
<dl class="facts">
<dt>study file</dt><dd>{{.Info.Source}}</dd>
<dt>study hash (SHA-256)</dt><dd>{{.Info.StudyHash}}</dd>
<dt>seed</dt><dd>{{.Info.Seed}}</dd>
<dt>sampling</dt><dd>{{.Info.Sampling}}</dd>
<dt>cases</dt><dd>{{count .Info.Cases}}</dd>
<dt>rejected cases</dt><dd>{{count .Info.Rejected}}{{range $k, $v := .Info.RejectedBy}} · {{$k}}: {{count $v}}{{end}}</dd>
<dt>percentiles</dt><dd>{{.Convention}}</dd>
{{range .Model}}<dt>{{.Term}}</dt><dd>{{.Text}}</dd>
{{end}}
<dt>version</dt><dd>{{.Info.Version}}</dd>
<dt>started (UTC)</dt><dd>{{.Info.Started}}</dd>
</dl>
<p>{{.ConventionText}}</p>
</section>

{{if .Headline}}<section id="key-figures">
<h2>Key figures</h2>
<div class="cards">
{{range .Headline}}<div class="card"><h3>{{.Title}}</h3>
<div class="trio"><div><span class="v">{{card .P90}}</span><span class="k">P90</span></div><div><span class="v">{{card .P50}}</span><span class="k">P50</span></div><div><span class="v">{{card .P10}}</span><span class="k">P10</span></div></div>
<p class="unit">{{.Unit}} · {{count .N}} cases</p></div>
{{end}}</div>
</section>{{end}}

<section id="outcomes">
<h2>How likely each outcome is</h2>
<p class="note">Each curve gives the share of cases that exceed a value. The marked points are P90, P50 and P10 as in the summary table.</p>
<div class="figs">
{{range .Figures.Exceed}}{{template "fig" .}}{{end}}</div>
</section>

{{if .Figures.Bands}}<section id="by-pvi">
<h2>Recovery and cut by pore volumes injected</h2>
<div class="figs">
{{range .Figures.Bands}}{{template "fig" .}}{{end}}</div>
<div class="scroll"><table>
<thead><tr><th>PVI</th><th>recovery P90</th><th>recovery P50</th><th>recovery P10</th><th>cut P90</th><th>cut P50</th><th>cut P10</th></tr></thead>
<tbody>
{{range .Curves}}<tr><td>{{num .PVI}}</td><td>{{num .RecoveryP90}}</td><td>{{num .RecoveryP50}}</td><td>{{num .RecoveryP10}}</td><td>{{num .CutP90}}</td><td>{{num .CutP50}}</td><td>{{num .CutP10}}</td></tr>
{{end}}</tbody>
</table></div>
</section>{{end}}

{{if .Figures.Tornado}}<section id="tornado">
<h2>Which inputs move the results</h2>
<p class="note">Each uncertain input is moved alone to its {{pct .Study.Tornado.Low}} % and {{pct .Study.Tornado.High}} % quantiles while every other input stays at its median. The labels give the two input values; the bars, the output at each; the swing is the distance between them.</p>
<div class="figs">
{{range .Figures.Tornado}}{{template "fig" .}}{{end}}</div>
</section>{{end}}

{{if .Figures.FracFlow}}<section id="cases">
<h2>The P90, P50 and P10 cases</h2>
<p class="note">The cases whose {{.Phrase .Charts.KeyRecovery | lower}} lies nearest the P90, P50 and P10, solved again: the fractional-flow curve with its upper concave envelope (straight pieces are shocks), and the saturation along the model at two times.</p>
<div class="scroll"><table>
<thead><tr>{{range .CaseTable.Head}}<th>{{.}}</th>{{end}}</tr></thead>
<tbody>
{{range .CaseTable.Rows}}<tr>{{range .}}<td>{{.}}</td>{{end}}</tr>
{{end}}</tbody>
</table></div>
<div class="figs small">
{{range .Figures.FracFlow}}{{template "fig" .}}{{end}}</div>
<div class="figs small">
{{range .Figures.Profiles}}{{template "fig" .}}{{end}}</div>
</section>{{end}}

{{if or .Figures.Hist .Figures.Corr}}<section id="inputs">
<h2>Sampled inputs</h2>
<p class="note">Bars: the share of cases in each bin. Black line: the share the specified distribution puts there. Inputs tied to another with same_as follow it and are not shown.</p>
<div class="figs small">
{{range .Figures.Hist}}{{template "fig" .}}{{end}}</div>
<div class="figs">
{{range .Figures.Corr}}{{template "fig" .}}{{end}}</div>
</section>{{end}}

<section id="tables">
<h2>Summary</h2>
<div class="scroll"><table>
<thead><tr><th>output</th><th>unit</th><th>n</th><th>rejected</th><th>mean</th><th>sd</th><th>P90</th><th>P50</th><th>P10</th><th>Swanson mean</th><th>P50 95 % interval</th></tr></thead>
<tbody>
{{range .Summary}}<tr><td>{{.Output}}</td><td>{{index $.Units .Output}}</td><td>{{.N}}</td><td>{{.NRejected}}</td><td>{{num .Mean}}</td><td>{{num .SD}}</td><td>{{num .P90}}</td><td>{{num .P50}}</td><td>{{num .P10}}</td><td>{{num .SwansonMean}}</td><td>{{num .P50Low}} – {{num .P50High}}</td></tr>
{{end}}</tbody>
</table></div>

<h2>Tornado table</h2>
<div class="scroll"><table>
<thead><tr><th>output</th><th>rank</th><th class="name">parameter</th><th>input low</th><th>input base</th><th>input high</th><th>output at low</th><th>output base</th><th>output at high</th><th>swing</th></tr></thead>
<tbody>
{{range .Tornado}}{{if index $.Keys .Output}}<tr><td>{{.Output}}</td><td>{{.Rank}}</td><td class="name">{{.Parameter}}</td><td>{{num .InputLow}}</td><td>{{num .InputBase}}</td><td>{{num .InputHigh}}</td><td>{{num .OutputAtLow}}</td><td>{{num .OutputBase}}</td><td>{{num .OutputAtHigh}}</td><td>{{num .Swing}}</td></tr>
{{end}}{{end}}</tbody>
</table></div>

<h2>Rank correlation of outputs with inputs (Spearman)</h2>
<div class="scroll"><table>
<thead><tr><th>output</th><th class="name">parameter</th><th>Spearman ρ</th><th>n</th></tr></thead>
<tbody>
{{range .Spearman}}{{if index $.Keys .Output}}<tr><td>{{.Output}}</td><td class="name">{{.Parameter}}</td><td>{{num .Spearman}}</td><td>{{.N}}</td></tr>
{{end}}{{end}}</tbody>
</table></div>

{{if .Sobol}}<h2>Variance-based sensitivity (Sobol indices)</h2>
<p class="note">Saltelli (2010) first-order and Jansen total indices with bootstrap 95 % bounds. {{.SobolNote}}.</p>
<div class="scroll"><table>
<thead><tr><th>output</th><th class="name">parameter</th><th>first order</th><th>bounds</th><th>total</th><th>bounds</th></tr></thead>
<tbody>
{{range .Sobol}}{{if index $.Keys .Output}}<tr><td>{{.Output}}</td><td class="name">{{.Parameter}}</td><td>{{num .First}}</td><td>{{num .FirstLow}} – {{num .FirstHigh}}</td><td>{{num .Total}}</td><td>{{num .TotalLow}} – {{num .TotalHigh}}</td></tr>
{{end}}{{end}}</tbody>
</table></div>{{end}}
</section>

<footer>
<p>Written by sweepstat {{.Builder}} from the files beside it: cases.arrow, summary.arrow, tornado.arrow, sensitivity.arrow, curves.arrow, run.json and study.yaml. Every chart is also in the charts folder as an SVG file. <code>sweepstat report</code> writes this page again from those files.</p>
</footer>
</body>
</html>
{{define "fig"}}<figure id="{{.ID}}"{{if .Wide}} class="wide"{{end}}>{{.SVG}}<figcaption>{{.Caption}} <a href="{{.File}}">SVG</a></figcaption></figure>
{{end}}`))

// fmtNum prints a number with four significant digits, NaN as "–".
func fmtNum(v float64) string {
	if s, ok := nonFinite(v); ok {
		return s
	}
	return strconv.FormatFloat(v, 'g', 4, 64)
}

// cardNum formats a key figure: as fmtNum, except that values from 10⁴ to
// 10¹⁵ are rounded to four significant digits and printed whole with
// thousands separators (6,352,000 rather than 6.352e+06).
func cardNum(v float64) string {
	a := math.Abs(v)
	if math.IsNaN(v) || a < 1e4 || a >= 1e15 {
		return fmtNum(v)
	}
	r, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'g', 4, 64), 64)
	return groupDigits(int(r))
}

// writeReport computes the charts of the study folder dir from its cases
// file and d, writes each into dir/charts/ as an SVG file and renders
// report.html with the charts inline. It returns the files written,
// relative to dir.
func writeReport(ctx context.Context, dir string, st *studies.Study, design *sampler.Design, d *reportData, mem memory.Allocator, progress Progress, builder string) ([]string, error) {
	// One step per column read and per pass over the inputs (computeCharts).
	steps := 4 + len(checkpointsShown(st.Report.PVI))
	done := 0
	tick := func() {}
	if progress != nil {
		progress.Start(st.Name, "report", steps)
		defer progress.Finish()
		tick = func() {
			if done < steps {
				done++
				progress.Add(1)
			}
		}
	}
	cd, err := computeCharts(ctx, dir, st, design, d, mem, tick)
	if err != nil {
		return nil, err
	}
	d.Charts = cd
	d.Builder = builder
	if d.Builder == "" {
		d.Builder = d.Info.Version
	}
	d.Headline = headlines(d, cd)
	d.Model = modelFacts(st)
	d.Units = map[string]string{}
	for _, o := range st.Model().Outputs(st.Report.PVI) {
		d.Units[o.Name] = unitText(o.Unit)
	}
	d.CaseTable = casesTable(cd, st, design)
	docs := chartDocs(cd, d, st)
	if err := os.MkdirAll(filepath.Join(dir, ChartsDir), 0o755); err != nil {
		return nil, err
	}
	var files []string
	for _, c := range docs {
		rel := ChartsDir + "/" + c.name
		if err := writeFileAtomic(filepath.Join(dir, ChartsDir, c.name), c.doc.file()); err != nil {
			return nil, err
		}
		files = append(files, rel)
		fig := figure{ID: "fig-" + strings.TrimSuffix(c.name, ".svg"), Wide: c.section == &d.Figures.Corr,
			File: rel, Caption: c.caption, SVG: template.HTML(c.doc.String())}
		*c.section = append(*c.section, fig)
	}
	var buf bytes.Buffer
	if err := reportTemplate.Execute(&buf, d); err != nil {
		return nil, fmt.Errorf("rendering %s: %w", ReportFile, err)
	}
	if err := writeFileAtomic(filepath.Join(dir, ReportFile), buf.Bytes()); err != nil {
		return nil, err
	}
	return append(files, ReportFile), nil
}

// chartDoc is one rendered chart with its place in the report.
type chartDoc struct {
	name    string // file name in the charts folder
	caption string
	doc     *svgDoc
	section *[]figure
}

// chartDocs renders every chart of cd.
func chartDocs(cd *chartData, d *reportData, st *studies.Study) []chartDoc {
	w := words{st}
	f := &d.Figures
	var out []chartDoc
	add := func(section *[]figure, name, caption string, doc *svgDoc) {
		out = append(out, chartDoc{name: name, caption: caption, doc: doc, section: section})
	}
	for _, e := range cd.Exceed {
		add(&f.Exceed, chartName("exceedance", e.Output), "Probability of exceeding, "+e.Output+".", exceedanceSVG(e, w, cd.Conv))
	}
	if len(cd.Checkpoints) > 0 {
		add(&f.Exceed, chartName("exceedance", "recovery-checkpoints"), "Probability of exceeding, recovery at each checkpoint.", checkpointsSVG(cd.Checkpoints, w))
	}
	if len(d.Curves) > 0 {
		add(&f.Bands, chartName("band", "recovery"), "P90, P50 and P10 of recovery at each checkpoint, from curves.arrow.", bandSVG(d.Curves, "recovery", w))
		add(&f.Bands, chartName("band", "cut"), "P90, P50 and P10 of the outlet cut at each checkpoint, from curves.arrow.", bandSVG(d.Curves, "cut", w))
	}
	for _, t := range cd.Tornado {
		add(&f.Tornado, chartName("tornado", t.Output), "Tornado of "+t.Output+", from tornado.arrow.", tornadoSVG(t, w))
	}
	for _, c := range cd.Cases {
		add(&f.FracFlow, chartName("fractional-flow", strings.ToLower(c.Label)), c.Label+" case (case "+strconv.Itoa(c.Case)+").", fracFlowSVG(c, caseIndex(c.Label), w, cd.KeyRecovery))
	}
	if len(cd.Cases) > 0 {
		for k, t := range cd.ProfilePVI {
			caption := "Half the P50 breakthrough."
			if k == 1 {
				caption = "Twice the P50 breakthrough."
			}
			add(&f.Profiles, chartName("profile", engine.PVIName(t)+"pvi"), caption, profileSVG(cd.Cases, t, w))
		}
	}
	for _, h := range cd.Hist {
		caption := h.Param.String() + ": " + specText(h.Spec) + "."
		if h.Tails {
			caption += " The outer bins also hold the " + strconv.FormatFloat(100*HistogramTail, 'g', 3, 64) + " % tails beyond them."
		}
		add(&f.Hist, chartName("histogram", h.Param.String()), caption, histogramSVG(h))
	}
	if cd.Corr != nil {
		add(&f.Corr, chartName("rank-correlation", ""), "Achieved Spearman rank correlation between the sampled inputs, with the study's targets.", corrSVG(cd.Corr))
	}
	return out
}

// headlines returns the key figures: breakthrough and the key recovery.
func headlines(d *reportData, cd *chartData) []headline {
	w := words{d.Study}
	var out []headline
	names := []string{engine.ColBreakthroughPVI, cd.KeyRecovery}
	if d.Study.Model().Volumes != nil {
		names = append(names, engine.ColBreakthroughDays, engine.ColProducedAtCutLimit)
	}
	for _, name := range names {
		for _, r := range d.Summary {
			if r.Output != name {
				continue
			}
			unit := "pore volumes injected"
			switch name {
			case engine.ColBreakthroughPVI:
			case engine.ColBreakthroughDays:
				unit = "days"
			case engine.ColProducedAtCutLimit:
				unit = "m³ at surface conditions"
			default:
				unit = w.recoveryUnit()
			}
			out = append(out, headline{Title: w.output(name), Unit: unit, P90: r.P90, P50: r.P50, P10: r.P10, N: r.N})
		}
	}
	return out
}

// casesTable lists the P cases, one column each, with their key recovery,
// breakthrough and uncertain inputs as rows.
func casesTable(cd *chartData, st *studies.Study, design *sampler.Design) caseTable {
	t := caseTable{Head: []string{""}}
	number := []string{"case"}
	value := []string{cd.KeyRecovery}
	bt := []string{engine.ColBreakthroughPVI}
	for _, c := range cd.Cases {
		t.Head = append(t.Head, c.Label+" case")
		number = append(number, strconv.Itoa(c.Case))
		value = append(value, fmtNum(c.Value))
		bt = append(bt, fmtNum(c.Sol.BreakthroughPVI()))
	}
	t.Rows = [][]string{number, value, bt}
	in, err := summarize.NewInputs(st, design)
	if err != nil {
		return t
	}
	for _, l := range in.Leaders {
		row := []string{paramLabel(l.Param)}
		for _, c := range cd.Cases {
			row = append(row, fmtNum(c.Params[l.Param]))
		}
		t.Rows = append(t.Rows, row)
	}
	return t
}
