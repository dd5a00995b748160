package studies

import (
	"errors"
	"fmt"
	"io/fs"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"

	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/sampler"
)

// minimalStudy gives only what a study must give: name, cases and the nine
// required parameters, all fixed.
const minimalStudy = `name: minimal
cases: 10
parameters:
  s1_init: 0.2
  s1r: 0.2
  s2r: 0.25
  kr1_max: 0.4
  kr2_max: 0.9
  n1: 2
  n2: 2
  mu1_cp: 0.5
  mu2_cp: 2
`

func mustParse(t *testing.T, src string) *Study {
	t.Helper()
	s, err := Parse("test.yaml", []byte(src))
	if err != nil {
		t.Fatalf("Parse: unexpected errors:\n%s\nsource:\n%s", listText(err), src)
	}
	return s
}

func TestParseDefaults(t *testing.T) {
	t.Parallel()
	s := mustParse(t, minimalStudy)
	// The defaults of DESIGN §4 and the package's Default constants.
	want := Study{
		Name:     "minimal",
		Phases:   Phases{Injected: "phase 1", Displaced: "phase 2"},
		Cases:    10,
		Seed:     1,
		Sampling: "lhs",
		Report:   Report{PVI: []float64{0.25, 0.5, 1, 2, 3}, CutLimit: 0.98, Percentiles: "exceedance"},
		Tornado:  Tornado{Low: 0.1, High: 0.9},
	}
	got := *s
	got.Parameters, got.Source, got.Hash, got.FileHash, got.parametersPos = nil, "", "", "", Pos{}
	if m := got.Model(); m == nil || m.Family != engine.FamilyCorey || m.Volumes != nil {
		t.Errorf("Model() = %+v, want plain Corey", m)
	}
	got.model = nil
	if !reflect.DeepEqual(got, want) {
		t.Errorf("defaults\n got %+v\nwant %+v", got, want)
	}
	if s.Source != "test.yaml" {
		t.Errorf("Source = %q", s.Source)
	}
	if len(s.Parameters) != 9 {
		t.Errorf("%d parameters, want 9", len(s.Parameters))
	}
	for p := engine.DipDeg; p <= engine.VelocityMPerDay; p++ {
		if v, fixed := s.Fixed(p); !fixed || v != 0 {
			t.Errorf("Fixed(%v) = %g, %v; want the default 0, true", p, v, fixed)
		}
	}
	if u := s.Uncertain(); len(u) != 0 {
		t.Errorf("Uncertain() = %v, want none", u)
	}
}

// TestParseDesignExample parses the study of DESIGN §4 verbatim: the
// contract's own example must be valid and mean what it says.
func TestParseDesignExample(t *testing.T) {
	t.Parallel()
	const design = `name: tilted-block-waterflood         # the scenario is invented
phases: {injected: water, displaced: oil}
cases: 20000
seed: 7
sampling: lhs
parameters:
  s1_init: 0.18
  s1r: {same_as: s1_init}
  s2r: {dist: triangular, min: 0.18, mode: 0.25, max: 0.35}
  kr1_max: {dist: uniform, min: 0.2, max: 0.5}
  kr2_max: 0.85
  n1: {dist: uniform, min: 1.5, max: 4}
  n2: {dist: uniform, min: 1.5, max: 3.5}
  mu1_cp: 0.5
  mu2_cp: {dist: lognormal, mean: 3, sd: 1.2, min: 0.8}
  dip_deg: {dist: uniform, min: -8, max: 8}
  rho1: 1040
  rho2: 860
  perm_md: {dist: lognormal, mean: 150, sd: 80}
  velocity_m_per_day: 0.3
correlations:
  - [n1, n2, 0.4]
report:
  pvi: [0.25, 0.5, 1, 2, 3]
  cut_limit: 0.98
  percentiles: exceedance   # exceedance (reserves convention, P90 = low) | cumulative
tornado: {low: 0.1, high: 0.9}
sensitivity: {sobol: 0}     # base sample size for Sobol indices, 0 = off
`
	s := mustParse(t, design)
	if s.Name != "tilted-block-waterflood" || s.Cases != 20000 || s.Seed != 7 || s.Sampling != "lhs" {
		t.Errorf("header: %q %d %d %q", s.Name, s.Cases, s.Seed, s.Sampling)
	}
	if s.Phases != (Phases{"water", "oil"}) {
		t.Errorf("phases %+v", s.Phases)
	}
	if len(s.Parameters) != int(engine.VelocityMPerDay)+1 {
		t.Fatalf("%d parameters, want all %d", len(s.Parameters), engine.VelocityMPerDay+1)
	}
	s2r, _ := s.Lookup(engine.S2r)
	if want := (sampler.Spec{Name: "s2r", Kind: sampler.Triangular, Min: 0.18, Mode: 0.25, Max: 0.35, HasMin: true, HasMax: true}); !reflect.DeepEqual(s2r.Spec, want) {
		t.Errorf("s2r spec %+v, want %+v", s2r.Spec, want)
	}
	mu2, _ := s.Lookup(engine.Mu2CP)
	if want := (sampler.Spec{Name: "mu2_cp", Kind: sampler.LogNormal, Mean: 3, SD: 1.2, Min: 0.8, HasMin: true}); !reflect.DeepEqual(mu2.Spec, want) {
		t.Errorf("mu2_cp spec %+v, want %+v", mu2.Spec, want)
	}
	if v, fixed := s.Fixed(engine.S1r); !fixed || v != 0.18 {
		t.Errorf("Fixed(s1r) = %g, %v; want 0.18 (same_as a fixed s1_init)", v, fixed)
	}
	if want := []Correlation{{A: "n1", B: "n2", Rho: 0.4, Pos: Pos{22, 5}}}; !reflect.DeepEqual(s.Correlations, want) {
		t.Errorf("correlations %+v, want %+v", s.Correlations, want)
	}
	wantU := []engine.Param{engine.S2r, engine.Kr1Max, engine.N1, engine.N2, engine.Mu2CP, engine.DipDeg, engine.PermMD}
	if got := s.Uncertain(); !slices.Equal(got, wantU) {
		t.Errorf("Uncertain() = %v, want %v", got, wantU)
	}
}

// TestParameterOrder: the order of keys in the file changes nothing.
func TestParameterOrder(t *testing.T) {
	t.Parallel()
	lines := strings.Split(strings.TrimSuffix(withDip(), "\n"), "\n")
	start := slices.Index(lines, "parameters:") + 1
	end := slices.Index(lines, "correlations:")
	reversed := slices.Clone(lines)
	slices.Reverse(reversed[start:end])
	a := mustParse(t, withDip())
	b := mustParse(t, strings.Join(reversed, "\n")+"\n")
	var names []string
	for _, p := range b.Parameters {
		names = append(names, p.Name)
	}
	want := "s1_init s1r s2r kr1_max kr2_max n1 n2 mu1_cp mu2_cp dip_deg rho1 rho2 perm_md velocity_m_per_day"
	if strings.Join(names, " ") != want {
		t.Errorf("Parameters order %v, want engine.Param order", names)
	}
	if !reflect.DeepEqual(a.Specs(), b.Specs()) {
		t.Errorf("Specs differ with the file order:\n%+v\n%+v", a.Specs(), b.Specs())
	}
	if a.Hash == b.Hash {
		t.Errorf("different files have the same hash")
	}
}

func TestHash(t *testing.T) {
	t.Parallel()
	const src = "name: hash-check\ncases: 1\nparameters: {s1_init: 0.1, s1r: 0.1, s2r: 0.2, kr1_max: 0.4, kr2_max: 0.9, n1: 2, n2: 2, mu1_cp: 0.5, mu2_cp: 2}\n"
	// Computed with coreutils sha256sum over the same bytes.
	const want = "3f81e86edfbcec839128c7ed6337ba7af1bc72473d7fd10d78076f7afece7f3b"
	if got := mustParse(t, src).Hash; got != want {
		t.Errorf("Hash = %s, want %s", got, want)
	}
}

func TestSpecs(t *testing.T) {
	t.Parallel()
	// A same_as chain s1r → s1_init → s2r.
	src := edit("  s1_init:", "  s1_init: {same_as: s2r}")
	src = editIn(src, "  s2r:", "  s2r: {dist: uniform, min: 0.1, max: 0.2}")
	s := mustParse(t, src)
	specs := s.Specs()
	if len(specs) != int(engine.NumParams) {
		t.Fatalf("%d specs, want %d", len(specs), engine.NumParams)
	}
	for j, p := range s.ParamIndex() {
		if specs[j].Name != p.String() {
			t.Errorf("spec %d is %s, ParamIndex says %v", j, specs[j].Name, p)
		}
		if p != engine.Param(j) {
			t.Errorf("ParamIndex()[%d] = %v, want the identity", j, p)
		}
	}
	if specs[engine.S1r].Kind != sampler.SameAs || specs[engine.S1r].SameAs != "s2r" {
		t.Errorf("s1r spec %+v, want same_as s2r (the chain's root)", specs[engine.S1r])
	}
	if p, _ := s.Lookup(engine.S1r); p.Spec.SameAs != "s1_init" {
		t.Errorf("Parameter s1r keeps same_as %q, want s1_init as written", p.Spec.SameAs)
	}
	for p := engine.DipDeg; p <= engine.VelocityMPerDay; p++ {
		if want := (sampler.Spec{Name: p.String(), Kind: sampler.Fixed}); !reflect.DeepEqual(specs[p], want) {
			t.Errorf("absent %v: spec %+v, want %+v", p, specs[p], want)
		}
	}
	for i := range specs {
		if specs[i].Kind == sampler.SameAs {
			continue
		}
		if errs := specs[i].Validate(); errs != nil {
			t.Errorf("spec %s does not validate: %v", specs[i].Name, errs)
		}
	}
	// Specs returns copies.
	specs[engine.N1].Min = -99
	if s.Specs()[engine.N1].Min == -99 {
		t.Errorf("Specs shares its slices with the study")
	}
	row := make([]float64, engine.NumParams)
	for j := range row {
		row[j] = float64(j) + 0.5
	}
	got := s.Case(row)
	for p := engine.Param(0); p < engine.NumParams; p++ {
		if got[p] != float64(p)+0.5 {
			t.Errorf("Case: %v = %g, want %g", p, got[p], float64(p)+0.5)
		}
	}
}

func TestFixed(t *testing.T) {
	t.Parallel()
	src := edit("  n1:", "  n1: {dist: discrete, values: [2.5, 2.5]}")
	src = editIn(src, "  n2:", "  n2: {dist: discrete, values: [2, 3], weights: [1, 0]}")
	src = editIn(src, "  - [n1, n2", "")
	src = editIn(src, "correlations:", "")
	s := mustParse(t, src)
	for _, tc := range []struct {
		p     engine.Param
		v     float64
		fixed bool
	}{
		{engine.S1Init, 0.2, true},  // a plain number
		{engine.S1r, 0.2, true},     // same_as a fixed parameter
		{engine.Kr2Max, 0.85, true}, // a plain number
		{engine.N1, 2.5, true},      // discrete, one distinct value
		{engine.N2, 2, true},        // discrete, the other value has weight 0
		{engine.DipDeg, 0, true},    // left out
		{engine.S2r, 0, false},
		{engine.Mu2CP, 0, false},
		{engine.NumParams, 0, false}, // not a parameter
	} {
		v, fixed := s.Fixed(tc.p)
		if v != tc.v || fixed != tc.fixed {
			t.Errorf("Fixed(%v) = %g, %v; want %g, %v", tc.p, v, fixed, tc.v, tc.fixed)
		}
	}
}

func TestPositions(t *testing.T) {
	t.Parallel()
	src := edit("  n1:", "  n1: {dist: discrete, values: [2, 3, 4], weights: [1, 2, 1]}")
	s := mustParse(t, src)
	n1, ok := s.Lookup(engine.N1)
	if !ok {
		t.Fatal("no n1")
	}
	// Line 10 is "  n1: {dist: discrete, values: [2, 3, 4], weights: [1, 2, 1]}".
	for _, tc := range []struct {
		field string
		want  Pos
	}{
		{"", Pos{10, 7}},
		{"dist", Pos{10, 14}},
		{"values", Pos{10, 32}},
		{"values[1]", Pos{10, 36}},
		{"weights[2]", Pos{10, 59}},
		{"max", Pos{10, 7}}, // not in the file: the value's position
	} {
		if got := n1.FieldPos(tc.field); got != tc.want {
			t.Errorf("FieldPos(%q) = %v, want %v", tc.field, got, tc.want)
		}
	}
	if n1.Pos != (Pos{10, 3}) || n1.ValuePos != (Pos{10, 7}) {
		t.Errorf("n1 Pos %v ValuePos %v", n1.Pos, n1.ValuePos)
	}
	if got := s.CorrelationPos(0); got != (Pos{15, 5}) {
		t.Errorf("CorrelationPos(0) = %v, want 15:5", got)
	}
	if got := s.CorrelationPos(-1); got != (Pos{14, 1}) {
		t.Errorf("CorrelationPos(-1) = %v, want the key at 14:1", got)
	}
	cause := errors.New("correlation matrix is not positive definite")
	e := s.CorrelationError(0, cause)
	if e.Error() != "test.yaml:15:5: correlations[0]: correlation matrix is not positive definite" || !errors.Is(e, cause) {
		t.Errorf("CorrelationError = %q", e)
	}
	if e := s.CorrelationError(-1, cause); e.Error() != "test.yaml:14:1: correlations: correlation matrix is not positive definite" {
		t.Errorf("CorrelationError(-1) = %q", e)
	}
	fe := sampler.FieldError{Field: "values[1]", Reason: "too small"}
	if e := s.ParameterError(engine.N1, fe.Field, fe); e.Error() != "test.yaml:10:36: parameters.n1.values[1]: too small" || !errors.Is(e, fe) {
		t.Errorf("ParameterError = %q", e)
	}
	// An error text that already names the place keeps it only once.
	prefixed := errors.New("correlations[0]: not positive definite")
	if e := s.CorrelationError(0, prefixed); e.Error() != "test.yaml:15:5: correlations[0]: not positive definite" {
		t.Errorf("CorrelationError = %q", e)
	}
	if e := s.ParameterError(engine.N1, "", errors.New("n1: bad")); e.Error() != "test.yaml:10:3: parameters.n1: bad" {
		t.Errorf("ParameterError(whole) = %q", e)
	}
	if e := s.ParameterError(engine.DipDeg, "", errors.New("dip_deg: bad")); e.Error() != "test.yaml:4:1: parameters.dip_deg: bad" {
		t.Errorf("ParameterError(absent) = %q", e)
	}
}

// TestLenientForms: YAML spellings that mean what a reader expects.
func TestLenientForms(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name  string
		src   string
		check func(*Study) error
	}{
		{"cases in exponent form", edit("cases:", "cases: 1e4"), func(s *Study) error { return wantEq(s.Cases, 10000) }},
		{"cases with underscores", edit("cases:", "cases: 20_000"), func(s *Study) error { return wantEq(s.Cases, 20000) }},
		{"largest cases", edit("cases:", "cases: 2147483647"), func(s *Study) error { return wantEq(s.Cases, MaxCases) }},
		{"seed as a whole float", edit("seed:", "seed: 7.0"), func(s *Study) error { return wantEq(s.Seed, uint64(7)) }},
		{"seed zero", edit("seed:", "seed: 0"), func(s *Study) error { return wantEq(s.Seed, uint64(0)) }},
		{"largest seed", edit("seed:", "seed: 18446744073709551615"), func(s *Study) error { return wantEq(s.Seed, uint64(math.MaxUint64)) }},
		{"hexadecimal seed", edit("seed:", "seed: 0x10"), func(s *Study) error { return wantEq(s.Seed, uint64(16)) }},
		{"numeric name", edit("name:", "name: 2031"), func(s *Study) error { return wantEq(s.Name, "2031") }},
		{"empty sections", baseStudy + "report:\ntornado:\nsensitivity:\nphases:\n", func(s *Study) error { return wantEq(s.Tornado, Tornado{0.1, 0.9}) }},
		{"no correlations", rep(baseStudy, "correlations:\n  - [n1, n2, 0.4]\n", "correlations: []\n"), func(s *Study) error { return wantEq(len(s.Correlations), 0) }},
		{"anchors and aliases", rep(edit("  n1:", "  n1: &exp {dist: uniform, min: 1.5, max: 4}"), "  n2: {dist: uniform, min: 1.5, max: 3.5}", "  n2: *exp"),
			func(s *Study) error {
				n2, _ := s.Lookup(engine.N2)
				return wantEq(n2.Spec.Max, 4.0)
			}},
		{"s1_init below s1r", rep(edit("  s1_init:", "  s1_init: 0"), "  s1r: {same_as: s1_init}", "  s1r: {dist: uniform, min: 0.02, max: 0.08}"),
			func(s *Study) error { v, _ := s.Fixed(engine.S1Init); return wantEq(v, 0.0) }},
		{"dip fixed at zero needs nothing", edit("  mu2_cp:", "  mu2_cp: 3\n  dip_deg: 0"), func(s *Study) error { return wantEq(len(s.Parameters), 10) }},
		{"equal densities need no permeability", edit("  mu2_cp:", "  mu2_cp: 3\n  dip_deg: 10\n  rho1: 900\n  rho2: 900\n  perm_md: 0\n  velocity_m_per_day: 0"),
			func(s *Study) error { return wantEq(len(s.Parameters), 14) }},
		{"range partly invalid", edit("  kr2_max:", "  kr2_max: {dist: uniform, min: 0.8, max: 1.2}"), func(s *Study) error { return nil }},
		{"discrete dip with a zero", edit("  mu2_cp:", "  mu2_cp: 3\n  dip_deg: {dist: discrete, values: [0, 5]}\n  rho1: 1000\n  rho2: 800\n  perm_md: 0\n  velocity_m_per_day: 1"),
			func(s *Study) error { return nil }},
		{"cumulative percentiles", baseStudy + "report: {percentiles: cumulative, pvi: [0.1, 10], cut_limit: 1}\n",
			func(s *Study) error {
				return wantEq(s.Report, Report{PVI: []float64{0.1, 10}, CutLimit: 1, Percentiles: "cumulative"})
			}},
		{"random sampling and sobol", baseStudy + "sampling: random\nsensitivity: {sobol: 256}\n",
			func(s *Study) error { return wantEq([2]any{s.Sampling, s.Sensitivity.Sobol}, [2]any{"random", 256}) }},
		{"phase labels", baseStudy + "phases: {injected: CO2, displaced: brine}\n", func(s *Study) error { return wantEq(s.Phases, Phases{"CO2", "brine"}) }},
		{"byte order mark", "\ufeff" + baseStudy, func(s *Study) error { return wantEq(s.Name, "base-study") }},
		{"document markers", "---\n" + baseStudy + "...\n", func(s *Study) error { return wantEq(s.Name, "base-study") }},
		{"windows line ends", strings.ReplaceAll(baseStudy, "\n", "\r\n"), func(s *Study) error { return wantEq(s.Cases, 100) }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s := mustParse(t, tc.src)
			if err := tc.check(s); err != nil {
				t.Error(err)
			}
		})
	}
}

func wantEq[T any](got, want T) error {
	if !reflect.DeepEqual(got, want) {
		return fmt.Errorf("got %+v, want %+v", got, want)
	}
	return nil
}

func TestLoad(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	path := filepath.Join(dir, "study.yaml")
	if err := os.WriteFile(path, []byte(minimalStudy), 0o644); err != nil {
		t.Fatal(err)
	}
	s, err := Load(path)
	if err != nil {
		t.Fatalf("Load: %v", err)
	}
	if s.Source != path || s.Hash != mustParse(t, minimalStudy).Hash {
		t.Errorf("Source %q Hash %s", s.Source, s.Hash)
	}

	_, err = Load(filepath.Join(dir, "absent.yaml"))
	var list ErrorList
	if !errors.As(err, &list) || len(list) != 1 || !errors.Is(err, fs.ErrNotExist) {
		t.Fatalf("Load(absent) = %v, want an ErrorList wrapping fs.ErrNotExist", err)
	}
	if want := filepath.Join(dir, "absent.yaml") + ": cannot read study file: no such file or directory"; list[0].Error() != want {
		t.Errorf("got %q, want %q", list[0], want)
	}

	big := filepath.Join(dir, "big.yaml")
	if err := os.WriteFile(big, []byte(minimalStudy+"# "+strings.Repeat("x", MaxFileSize)+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := Load(big); !errors.Is(err, ErrValue) || !strings.Contains(err.Error(), "larger than") {
		t.Errorf("Load(big) = %v, want a size error", err)
	}
}

// TestValidityAgreesWithEngine draws fully fixed parameter sets around the
// boundaries of the DESIGN §2 rules and checks that Parse rejects exactly
// those that engine.Params.Validate rejects, blaming (among others) the
// parameter the engine names.
func TestValidityAgreesWithEngine(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(1, 1))
	grid := map[engine.Param][]float64{
		engine.S1Init: {-0.1, 0, 0.2, 0.5, 0.7, 0.8, 1},
		engine.S1r:    {-0.1, 0, 0.2, 0.3, 0.5, 0.8},
		engine.S2r:    {-0.1, 0, 0.2, 0.3, 0.5, 1},
		engine.Kr1Max: {-0.5, 0, 0.4, 1, 1.5},
		engine.Kr2Max: {0, 0.9, 1, 1.01},
		engine.N1:     {-1, 0, 2},
		engine.N2:     {0, 1.5, 3},
		engine.Mu1CP:  {-1, 0, 0.5},
		engine.Mu2CP:  {0, 3},
		engine.DipDeg: {0, 5, -30, 90, -90, 90.5, -120},
		engine.Rho1:   {-1, 0, 800, 1000},
		engine.Rho2:   {-1, 0, 800, 1000},
		engine.PermMD: {-5, 0, 100},
		engine.VelocityMPerDay: {
			-1, 0, 0.3},
	}
	typical := engine.Params{0.2, 0.2, 0.25, 0.4, 0.9, 2, 2, 0.5, 3, 5, 1000, 800, 100, 0.3}
	rejected := 0
	for i := 0; i < 3000; i++ {
		var params engine.Params
		var b strings.Builder
		b.WriteString("name: agree\ncases: 1\nparameters:\n")
		for p := engine.Param(0); p <= engine.VelocityMPerDay; p++ {
			// Mostly a typical valid value, so that one or two rules are
			// at stake in each draw.
			params[p] = typical[p]
			if rng.Float64() < 0.15 {
				g := grid[p]
				params[p] = g[rng.IntN(len(g))]
			}
			fmt.Fprintf(&b, "  %s: %g\n", p, params[p])
		}
		src := b.String()
		_, err := Parse("agree.yaml", []byte(src))
		verr := params.Validate()
		if (err == nil) != (verr == nil) {
			t.Fatalf("Parse says %v, engine says %v, for\n%s", listText(err), verr, src)
		}
		if err == nil {
			continue
		}
		rejected++
		var ve *engine.ValidityError
		if !errors.As(verr, &ve) {
			t.Fatalf("engine error %v is not a ValidityError", verr)
		}
		for _, e := range err.(ErrorList) {
			if !errors.Is(e, ErrValue) {
				t.Fatalf("unexpected non-value error %v", e)
			}
		}
		if findPath(err, "parameters."+ve.Param.String()) == nil {
			t.Errorf("engine blames %v (%v); Parse reports\n%s", ve.Param, verr, listText(err))
		}
	}
	t.Logf("%d of 3000 fixed sets rejected", rejected)
	if rejected < 300 || rejected > 2700 {
		t.Errorf("%d of 3000 rejected: the grid does not exercise both outcomes", rejected)
	}
}

func findPath(err error, path string) *Error {
	var list ErrorList
	errors.As(err, &list)
	for _, e := range list {
		if e.Path == path {
			return e
		}
	}
	return nil
}

// TestImpossibleRangesNeverValid checks the other side of the range
// checks: whenever Parse calls a set of uniform ranges impossible, no
// sample drawn from them passes engine.Params.Validate.
func TestImpossibleRangesNeverValid(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(2, 2))
	// Range ends for each parameter, around its rule's boundaries.
	ends := map[engine.Param][]float64{
		engine.S1Init: {-0.3, -0.1, 0, 0.3, 0.6, 0.9, 1.2},
		engine.S1r:    {-0.3, -0.1, 0, 0.3, 0.6, 0.9, 1.2},
		engine.S2r:    {-0.3, -0.1, 0, 0.3, 0.6, 0.9, 1.2},
		engine.Kr1Max: {-0.5, 0, 0.5, 1, 1.5},
		engine.Kr2Max: {-0.5, 0, 0.5, 1, 1.5},
		engine.N1:     {-2, 0, 2},
		engine.N2:     {-2, 0, 2},
		engine.Mu1CP:  {-2, 0, 2},
		engine.Mu2CP:  {-2, 0, 2},
		engine.DipDeg: {-120, -90, 0, 90, 120},
		engine.Rho1:   {-100, 0, 900},
		engine.Rho2:   {-100, 0, 900},
		engine.PermMD: {-10, 0, 100},
		engine.VelocityMPerDay: {
			-1, 0, 1},
	}
	typical := engine.Params{0.2, 0.2, 0.25, 0.4, 0.9, 2, 2, 0.5, 3, 5, 1000, 800, 100, 0.3}
	impossible := 0
	for i := 0; i < 2000; i++ {
		var lo, hi [engine.NumParams]float64
		var b strings.Builder
		b.WriteString("name: ranges\ncases: 1\nparameters:\n")
		for p := engine.Param(0); p <= engine.VelocityMPerDay; p++ {
			if rng.Float64() > 0.2 {
				// A typical valid range, so that one or two rules are at
				// stake in each draw.
				lo[p], hi[p] = 0.9*typical[p], 1.1*typical[p]
				fmt.Fprintf(&b, "  %s: {dist: uniform, min: %g, max: %g}\n", p, lo[p], hi[p])
				continue
			}
			e := ends[p]
			a, c := rng.IntN(len(e)), rng.IntN(len(e))
			if a == c {
				lo[p], hi[p] = e[a], e[a]
				fmt.Fprintf(&b, "  %s: %g\n", p, e[a])
				continue
			}
			lo[p], hi[p] = e[min(a, c)], e[max(a, c)]
			fmt.Fprintf(&b, "  %s: {dist: uniform, min: %g, max: %g}\n", p, lo[p], hi[p])
		}
		src := b.String()
		_, err := Parse("ranges.yaml", []byte(src))
		if err == nil {
			continue
		}
		if !errors.Is(err, ErrValue) {
			t.Fatalf("unexpected error kind:\n%s\n%s", listText(err), src)
		}
		impossible++
		for k := 0; k < 200; k++ {
			var params engine.Params
			for p := range params {
				params[p] = lo[p] + (hi[p]-lo[p])*rng.Float64()
			}
			if params.Validate() == nil {
				t.Fatalf("Parse rejected\n%s\nwith\n%s\nbut the sample %v is valid", src, listText(err), params)
			}
		}
	}
	t.Logf("%d of 2000 range sets rejected", impossible)
	if impossible < 100 || impossible > 1900 {
		t.Errorf("only %d of 2000 range sets rejected: the test does not bite", impossible)
	}
}
