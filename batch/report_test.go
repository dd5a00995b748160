package batch

import (
	"bytes"
	"context"
	"encoding/xml"
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"

	"github.com/apache/arrow/go/v17/arrow/array"
	"github.com/apache/arrow/go/v17/arrow/ipc"
	"github.com/apache/arrow/go/v17/arrow/memory"
	"gonum.org/v1/gonum/floats/scalar"

	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/studies"
	"github.com/sweepstat/sweepstat/summarize"
)

// readArrowFile reads a small Arrow IPC file with the Arrow library alone
// (not the package's readers): every column by name.
func readArrowFile(t *testing.T, path string) map[string]any {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	r, err := ipc.NewFileReader(f, ipc.WithAllocator(memory.NewGoAllocator()))
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	cols := map[string]any{}
	for i := range r.NumRecords() {
		rec, err := r.Record(i)
		if err != nil {
			t.Fatal(err)
		}
		for j, fd := range rec.Schema().Fields() {
			switch c := rec.Column(j).(type) {
			case *array.String:
				s, _ := cols[fd.Name].([]string)
				for k := range c.Len() {
					s = append(s, c.Value(k))
				}
				cols[fd.Name] = s
			case *array.Int64:
				s, _ := cols[fd.Name].([]int64)
				cols[fd.Name] = append(s, c.Int64Values()...)
			case *array.Float64:
				s, _ := cols[fd.Name].([]float64)
				cols[fd.Name] = append(s, c.Float64Values()...)
			}
		}
	}
	return cols
}

// chartsOf runs st into a temporary folder and computes the report's
// chart data from the folder's files.
func chartsOf(t *testing.T, st *studies.Study) (dir string, cd *chartData, d *reportData) {
	t.Helper()
	out := t.TempDir()
	runInto(t, st, out, 2)
	dir = filepath.Join(out, st.Name)
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	defer mem.AssertSize(t, 0)
	st2, d, err := loadFolder(dir, mem)
	if err != nil {
		t.Fatal(err)
	}
	design, err := NewDesign(st2)
	if err != nil {
		t.Fatal(err)
	}
	cd, err = computeCharts(context.Background(), dir, st2, design, d, mem, func() {})
	if err != nil {
		t.Fatal(err)
	}
	return dir, cd, d
}

// TestReportChartData checks the data behind the charts of a cut-down demo
// run against the output files, read independently with the Arrow
// library: the marks of the exceedance curves are summary.arrow's
// percentiles and lie on the curves; the tornado bars come in
// tornado.arrow's rank order; the histograms count every case; the P
// cases are nearest their percentiles and solve again to the recovery in
// cases.arrow.
func TestReportChartData(t *testing.T) {
	t.Parallel()
	const n = 2000
	st := smallStudy(t, n)
	dir, cd, _ := chartsOf(t, st)
	summary := readArrowFile(t, filepath.Join(dir, SummaryFile))
	outNames := summary["output"].([]string)
	pcol := map[string][]float64{"P90": summary["p90"].([]float64), "P50": summary["p50"].([]float64), "P10": summary["p10"].([]float64)}

	t.Run("exceedance marks", func(t *testing.T) {
		curves := append(slices.Clone(cd.Exceed), cd.Checkpoints...)
		if len(curves) != 2+len(st.Report.PVI) {
			t.Fatalf("%d exceedance curves, want %d", len(curves), 2+len(st.Report.PVI))
		}
		for _, e := range curves {
			row := slices.Index(outNames, e.Output)
			if row < 0 {
				t.Fatalf("%s not in summary.arrow", e.Output)
			}
			if len(e.Marks) != 3 {
				t.Fatalf("%s: %d marks", e.Output, len(e.Marks))
			}
			for _, m := range e.Marks {
				want := pcol[m.Label][row]
				if !scalar.EqualWithinAbsOrRel(m.Value, want, 1e-12, 1e-12) {
					t.Errorf("%s %s mark = %v, summary.arrow has %v", e.Output, m.Label, m.Value, want)
				}
				// The curve passes through the mark: some point of it is
				// the mark (its probability is on the curve's grid).
				on := slices.ContainsFunc(e.Curve, func(p point) bool {
					return p.X == m.Value && scalar.EqualWithinAbs(p.Y, m.Exceed, 1e-15)
				})
				if !on {
					t.Errorf("%s %s mark (%v, %v) is not on the curve", e.Output, m.Label, m.Value, m.Exceed)
				}
			}
			// Exceedance under the reserves convention (SPE-PRMS 2018): P90
			// is exceeded with probability 0.9.
			if m := e.Marks[0]; m.Label != "P90" || m.Exceed != 0.9 {
				t.Errorf("%s: first mark %s at %v, want P90 at 0.9", e.Output, m.Label, m.Exceed)
			}
			if len(e.Curve) > MaxCurvePoints+3 {
				t.Errorf("%s: %d curve points for %d cases", e.Output, len(e.Curve), n)
			}
			for i := 1; i < len(e.Curve); i++ {
				if e.Curve[i].X < e.Curve[i-1].X || e.Curve[i].Y > e.Curve[i-1].Y {
					t.Fatalf("%s: curve not monotone at %d: %v then %v", e.Output, i, e.Curve[i-1], e.Curve[i])
				}
			}
		}
	})

	t.Run("tornado order", func(t *testing.T) {
		tor := readArrowFile(t, filepath.Join(dir, TornadoFile))
		outs, pars, ranks := tor["output"].([]string), tor["parameter"].([]string), tor["rank"].([]int64)
		if len(cd.Tornado) != 2+len(st.Report.PVI) {
			t.Fatalf("%d tornado charts, want %d", len(cd.Tornado), 2+len(st.Report.PVI))
		}
		for _, c := range cd.Tornado {
			byRank := map[int64]string{}
			for i := range outs {
				if outs[i] == c.Output {
					byRank[ranks[i]] = pars[i]
				}
			}
			if len(byRank) != len(c.Bars) {
				t.Fatalf("%s: %d bars, tornado.arrow has %d ranks", c.Output, len(c.Bars), len(byRank))
			}
			for i, b := range c.Bars {
				if want := byRank[int64(i+1)]; b.Parameter != want {
					t.Errorf("%s bar %d is %s, tornado.arrow ranks %s there", c.Output, i+1, b.Parameter, want)
				}
			}
		}
	})

	t.Run("histograms", func(t *testing.T) {
		if len(cd.Hist) == 0 {
			t.Fatal("no histograms")
		}
		for _, h := range cd.Hist {
			var sum int64
			var p float64
			for i, c := range h.Counts {
				sum += c
				p += h.Expected[i]
				// Latin hypercube (McKay, Beckman & Conover 1979): each of
				// the n strata of probability 1/n holds one case, so a bin
				// of probability p (an interval of CDF values) holds all the
				// strata inside it and at most the two it cuts:
				// |count − n·p| ≤ 2. Iman–Conover re-pairing keeps this.
				if d := math.Abs(float64(c) - n*h.Expected[i]); d > 2+1e-9 {
					t.Errorf("%s bin %d: %d cases, the distribution expects %.2f", h.Param, i, c, n*h.Expected[i])
				}
			}
			if sum != n || h.N != n {
				t.Errorf("%s: counts sum to %d (N %d), want the %d cases", h.Param, sum, h.N, n)
			}
			if !scalar.EqualWithinAbs(p, 1, 1e-9) {
				t.Errorf("%s: bin probabilities sum to %v", h.Param, p)
			}
		}
	})

	t.Run("rank correlation", func(t *testing.T) {
		m := cd.Corr
		if m == nil || m.N != n {
			t.Fatalf("matrix %+v", m)
		}
		for i := range m.Rho {
			for j := range m.Rho {
				if m.Rho[i][j] != m.Rho[j][i] || (i == j && m.Rho[i][j] != 1) {
					t.Fatalf("not a correlation matrix at (%d, %d)", i, j)
				}
			}
		}
		// Iman & Conover (1982) impose the target rank correlations; at
		// 2000 cases the achieved ones are within a few 1/√n of them.
		if len(m.Target) != len(st.Correlations) {
			t.Fatalf("%d targets, study has %d", len(m.Target), len(st.Correlations))
		}
		for ij, rho := range m.Target {
			if got := m.Rho[ij[0]][ij[1]]; math.Abs(got-rho) > 0.05 {
				t.Errorf("%s–%s: achieved %v, target %v", m.Names[ij[0]], m.Names[ij[1]], got, rho)
			}
		}
	})

	t.Run("P cases", func(t *testing.T) {
		cols, err := ReadFloat64Columns(filepath.Join(dir, CasesFile), []string{cd.KeyRecovery}, nil)
		if err != nil {
			t.Fatal(err)
		}
		rec := cols[0]
		if len(cd.Cases) != 3 {
			t.Fatalf("%d P cases", len(cd.Cases))
		}
		for _, c := range cd.Cases {
			for i, v := range rec {
				if math.Abs(v-c.Target) < math.Abs(c.Value-c.Target) {
					t.Errorf("%s: case %d (%v) is nearer %v than case %d (%v)", c.Label, i, v, c.Target, c.Case, c.Value)
					break
				}
			}
			var s engine.Solver
			var r engine.Result
			p := c.Params
			s.SolveCase(&p, st.Report.PVI, st.Report.CutLimit, &r)
			if r.RecoveryAtCutLimit != rec[c.Case] || c.Value != rec[c.Case] {
				t.Errorf("%s case %d: solves to %v, cases.arrow has %v, chart says %v", c.Label, c.Case, r.RecoveryAtCutLimit, rec[c.Case], c.Value)
			}
		}
		if !(cd.ProfilePVI[0] > 0 && cd.ProfilePVI[0] < cd.ProfilePVI[1]) {
			t.Errorf("profile PVIs %v", cd.ProfilePVI)
		}
	})
}

// TestProfileCurve compares the drawn saturation profile, built from the
// envelope's pieces, with Solution.Saturation, which solves for the state
// at each xD/tD on its own (LeVeque 1992, §16: S depends on xD/tD only).
// Points within 2e-3 of a shock are skipped; elsewhere the drawing's
// linear interpolation between 64 fan samples stays within 2e-3.
func TestProfileCurve(t *testing.T) {
	t.Parallel()
	base := engine.DefaultParams()
	gravity := base
	gravity[engine.DipDeg], gravity[engine.Rho1], gravity[engine.Rho2] = -20, 1040, 700
	gravity[engine.PermMD], gravity[engine.VelocityMPerDay] = 2000, 0.05
	mobile := base
	mobile[engine.S1Init] = base[engine.S1r] + 0.15
	for _, tc := range []struct {
		name string
		p    engine.Params
	}{{"default", base}, {"strong gravity", gravity}, {"mobile initial saturation", mobile}} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			sol, err := engine.Solve(tc.p)
			if err != nil || sol.Status != engine.StatusOK {
				t.Fatalf("solve: %v %v", err, sol.Status)
			}
			for _, tD := range []float64{0.1, 0.3, 0.8, 2} {
				pts := profileCurve(sol, tD)
				if len(pts) < 2 || pts[0].X != 0 || pts[len(pts)-1].X != 1 {
					t.Fatalf("tD %v: profile spans %v to %v", tD, pts[0], pts[len(pts)-1])
				}
				var shocks []float64
				for _, pc := range sol.Pieces() {
					if pc.Shock {
						shocks = append(shocks, tD*pc.Speed())
					}
				}
				for k := 1; k < 200; k++ {
					x := float64(k) / 200
					if slices.ContainsFunc(shocks, func(s float64) bool { return math.Abs(s-x) < 2e-3 }) {
						continue
					}
					got := polylineAt(pts, x)
					want := sol.Saturation(x, tD)
					if math.Abs(got-want) > 2e-3 {
						t.Errorf("tD %v xD %v: profile %v, Saturation %v", tD, x, got, want)
					}
				}
			}
		})
	}
}

// polylineAt returns the polyline's y at x (the last segment reaching x,
// so that a vertical jump reads as the state after it).
func polylineAt(pts []point, x float64) float64 {
	y := pts[0].Y
	for i := 1; i < len(pts); i++ {
		a, b := pts[i-1], pts[i]
		if x >= a.X && x <= b.X {
			if b.X == a.X {
				y = b.Y
			} else {
				y = a.Y + (b.Y-a.Y)*(x-a.X)/(b.X-a.X)
			}
		}
	}
	return y
}

// TestReportRebuild: `sweepstat report` writes the same report.html and
// charts as the run did, from the files alone, and leaves run.json
// consistent with them (the checksums Resume relies on).
func TestReportRebuild(t *testing.T) {
	t.Parallel()
	st := smallStudy(t, 1200)
	out := t.TempDir()
	info := runInto(t, st, out, 2)
	dir := filepath.Join(out, st.Name)
	if !slices.Contains(info.Files, StudyFile) || !slices.Contains(info.Files, ReportFile) {
		t.Fatalf("run.json files %v lack %s or %s", info.Files, StudyFile, ReportFile)
	}
	src, err := os.ReadFile(filepath.Join(dir, StudyFile))
	if err != nil || !bytes.Equal(src, studies.DemoSource()) {
		t.Fatalf("study.yaml is not the study file's bytes (err %v)", err)
	}
	var charts []string
	for _, f := range info.Files {
		if strings.HasPrefix(f, ChartsDir+"/") {
			charts = append(charts, f)
		}
	}
	if len(charts) < 10 {
		t.Fatalf("only %d charts listed: %v", len(charts), charts)
	}
	before := map[string][]byte{}
	for _, f := range append([]string{ReportFile}, charts...) {
		b, err := os.ReadFile(filepath.Join(dir, f))
		if err != nil {
			t.Fatal(err)
		}
		before[f] = b
	}
	// Remove the report, leave a stale chart behind, then rebuild from the
	// parent folder.
	os.Remove(filepath.Join(dir, ReportFile))
	os.RemoveAll(filepath.Join(dir, ChartsDir))
	os.MkdirAll(filepath.Join(dir, ChartsDir), 0o755)
	os.WriteFile(filepath.Join(dir, ChartsDir, "stale.svg"), []byte("<svg/>"), 0o644)
	if err := Report(context.Background(), out, ReportOptions{Version: "test"}); err != nil {
		t.Fatal(err)
	}
	for f, want := range before {
		got, err := os.ReadFile(filepath.Join(dir, f))
		if err != nil {
			t.Errorf("rebuilt %s: %v", f, err)
			continue
		}
		if !bytes.Equal(got, want) {
			t.Errorf("rebuilt %s differs from the run's", f)
		}
	}
	if _, err := os.Stat(filepath.Join(dir, ChartsDir, "stale.svg")); !os.IsNotExist(err) {
		t.Errorf("stale chart kept: %v", err)
	}
	if completeRun(dir, st, "test") == nil {
		t.Error("after the rebuild run.json no longer matches the files")
	}
}

// TestReportErrors: folders Report cannot work on.
func TestReportErrors(t *testing.T) {
	t.Parallel()
	st := smallStudy(t, 300)
	out := t.TempDir()
	runInto(t, st, out, 1)
	dir := filepath.Join(out, st.Name)
	tampered := t.TempDir()
	copyStudyFolder(t, dir, filepath.Join(tampered, st.Name))
	os.WriteFile(filepath.Join(tampered, st.Name, StudyFile), append(studies.DemoSource(), '\n'), 0o644)
	missing := t.TempDir()
	copyStudyFolder(t, dir, filepath.Join(missing, st.Name))
	os.Remove(filepath.Join(missing, st.Name, StudyFile))

	for _, tc := range []struct {
		name, dir, want string
	}{
		{"empty folder", t.TempDir(), "holds no study outputs"},
		{"no such folder", filepath.Join(out, "nope"), "no such file"},
		{"study file changed", tampered, "does not match"},
		{"study file missing", missing, StudyFile},
	} {
		t.Run(tc.name, func(t *testing.T) {
			err := Report(context.Background(), tc.dir, ReportOptions{})
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("Report(%s) = %v, want an error with %q", tc.dir, err, tc.want)
			}
		})
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if err := Report(ctx, out, ReportOptions{}); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled: %v", err)
	}
}

func copyStudyFolder(t *testing.T, from, to string) {
	t.Helper()
	err := filepath.WalkDir(from, func(p string, e os.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(from, p)
		if e.IsDir() {
			return os.MkdirAll(filepath.Join(to, rel), 0o755)
		}
		b, err := os.ReadFile(p)
		if err != nil {
			return err
		}
		return os.WriteFile(filepath.Join(to, rel), b, 0o644)
	})
	if err != nil {
		t.Fatal(err)
	}
}

// TestReportSmallRuns renders the report of runs with one and ten cases,
// under both conventions: every chart file is well-formed XML, and the
// page names no URL that a browser would fetch (the SVG namespace is a
// name, not a request).
func TestReportSmallRuns(t *testing.T) {
	t.Parallel()
	url := regexp.MustCompile(`https?://[^"' <>)]+`)
	const fixed = `name: fixed-only
cases: 7
parameters: {s1_init: 0.2, s1r: 0.2, s2r: 0.2, kr1_max: 0.3, kr2_max: 0.9, n1: 2, n2: 2, mu1_cp: 0.5, mu2_cp: 3}
`
	// s1_init above 1 − s2r = 0.65 is an invalid case: about 8 % are
	// rejected. A cut limit of 1 is never reached with n2 > 1 (f' → 0 at
	// S_b), so the P cases are chosen on the last checkpoint.
	const rejecting = `name: some-rejected
cases: 300
parameters:
  s1_init: {dist: uniform, min: 0.1, max: 0.7}
  s1r: 0.1
  s2r: 0.35
  kr1_max: 0.3
  kr2_max: 0.9
  n1: {dist: uniform, min: 1.5, max: 3}
  n2: 2
  mu1_cp: 0.5
  mu2_cp: 3
report: {cut_limit: 1}
`
	parse := func(src string) func(t *testing.T) *studies.Study {
		return func(t *testing.T) *studies.Study {
			st, err := studies.Parse("inline.yaml", []byte(src))
			if err != nil {
				t.Fatal(err)
			}
			return st
		}
	}
	demo := func(n int, conv string) func(t *testing.T) *studies.Study {
		return func(t *testing.T) *studies.Study {
			st := smallStudy(t, n)
			st.Report.Percentiles = conv
			return st
		}
	}
	for _, tc := range []struct {
		name  string
		study func(t *testing.T) *studies.Study
	}{
		{"one case", demo(1, studies.PercentilesExceedance)},
		{"ten cases", demo(10, studies.PercentilesCumulative)},
		{"every input fixed", parse(fixed)},
		{"rejected cases", parse(rejecting)},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			st := tc.study(t)
			out := t.TempDir()
			info := runInto(t, st, out, 1)
			dir := filepath.Join(out, st.Name)
			html, err := os.ReadFile(filepath.Join(dir, ReportFile))
			if err != nil {
				t.Fatal(err)
			}
			for _, u := range url.FindAllString(string(html), -1) {
				if u != "http://www.w3.org/2000/svg" {
					t.Errorf("report names %s", u)
				}
			}
			if n := strings.Count(string(html), "<svg "); n == 0 {
				t.Error("no inline charts")
			}
			for _, f := range info.Files {
				if !strings.HasSuffix(f, ".svg") {
					continue
				}
				b, err := os.ReadFile(filepath.Join(dir, f))
				if err != nil {
					t.Fatal(err)
				}
				if err := wellFormedXML(b); err != nil {
					t.Errorf("%s: %v", f, err)
				}
				if bytes.Contains(b, []byte("NaN")) || bytes.Contains(b, []byte("Inf")) {
					t.Errorf("%s holds a NaN or Inf coordinate", f)
				}
			}
		})
	}
}

func wellFormedXML(b []byte) error {
	d := xml.NewDecoder(bytes.NewReader(b))
	for {
		_, err := d.Token()
		if err == io.EOF {
			return nil
		}
		if err != nil {
			return err
		}
	}
}

// TestNewExceedance checks the curve of a small sample against order
// statistics worked by hand: for n values the curve is drawn through
// every order statistic x(i) at probability of exceeding 1 − (i−1)/(n−1)
// (Hyndman & Fan 1996, definition 7, whose quantile function is linear
// between them).
func TestNewExceedance(t *testing.T) {
	t.Parallel()
	col := []float64{3, math.NaN(), 1, 4, 2, 5}
	e := newExceedance("x", col, summarize.Exceedance)
	if e.N != 5 || e.Rejected != 1 {
		t.Fatalf("N %d, rejected %d", e.N, e.Rejected)
	}
	// Order statistics 1…5 at q = 0, .25, .5, .75, 1, plus the marks at
	// q = 0.1 (P90 = 1.4) and 0.9 (P10 = 4.6); P50 = 3 is an order
	// statistic.
	want := []point{{1, 1}, {1.4, 0.9}, {2, 0.75}, {3, 0.5}, {4, 0.25}, {4.6, 0.1}, {5, 0}}
	if len(e.Curve) != len(want) {
		t.Fatalf("curve %v, want %v", e.Curve, want)
	}
	for i, p := range e.Curve {
		if !scalar.EqualWithinAbs(p.X, want[i].X, 1e-12) || !scalar.EqualWithinAbs(p.Y, want[i].Y, 1e-12) {
			t.Errorf("point %d = %v, want %v", i, p, want[i])
		}
	}
	marks := []mark{{"P90", 1.4, 0.9}, {"P50", 3, 0.5}, {"P10", 4.6, 0.1}}
	for i, m := range e.Marks {
		if m.Label != marks[i].Label || !scalar.EqualWithinAbs(m.Value, marks[i].Value, 1e-12) || !scalar.EqualWithinAbs(m.Exceed, marks[i].Exceed, 1e-12) {
			t.Errorf("mark %d = %+v, want %+v", i, m, marks[i])
		}
	}
	// Under the cumulative convention P90 is the 0.9-quantile, exceeded
	// with probability 0.1.
	c := newExceedance("x", []float64{3, 1, 4, 2, 5}, summarize.Cumulative)
	if m := c.Marks[0]; m.Label != "P90" || !scalar.EqualWithinAbs(m.Value, 4.6, 1e-12) || !scalar.EqualWithinAbs(m.Exceed, 0.1, 1e-12) {
		t.Errorf("cumulative P90 mark %+v, want 4.6 at 0.1", m)
	}
	if e := newExceedance("x", []float64{math.NaN()}, summarize.Exceedance); len(e.Curve) != 0 || len(e.Marks) != 0 {
		t.Errorf("no valid value: %+v", e)
	}
}
