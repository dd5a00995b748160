package studies

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/sampler"
)

// TestShippedStudies parses every study the project ships.
func TestShippedStudies(t *testing.T) {
	t.Parallel()
	files, err := filepath.Glob(filepath.Join("examples", "*.yaml"))
	if err != nil || len(files) < 2 {
		t.Fatalf("examples: %v %v", files, err)
	}
	files = append(files, "demo.yaml", "template.yaml")
	for _, f := range files {
		t.Run(f, func(t *testing.T) {
			t.Parallel()
			s, err := Load(f)
			if err != nil {
				t.Fatalf("Load(%s):\n%s", f, listText(err))
			}
			if len(s.Uncertain()) == 0 {
				t.Errorf("%s has no uncertain parameter", f)
			}
			if base := strings.TrimSuffix(filepath.Base(f), ".yaml"); base != "demo" && base != "template" && s.Name != base {
				t.Errorf("example %s is named %q; name it after its file", f, s.Name)
			}
		})
	}
}

func TestDemo(t *testing.T) {
	t.Parallel()
	s, err := Demo()
	if err != nil {
		t.Fatalf("Demo:\n%s", listText(err))
	}
	onDisk, err := os.ReadFile("demo.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(onDisk, DemoSource()) {
		t.Errorf("DemoSource differs from demo.yaml")
	}
	if s.Source != DemoSourceName {
		t.Errorf("Source = %q", s.Source)
	}
	if s.Cases != 20000 || len(s.Correlations) == 0 {
		t.Errorf("cases %d, %d correlations", s.Cases, len(s.Correlations))
	}
	// An up-dip waterflood with the dip, densities and permeability uncertain.
	dip, _ := s.Lookup(engine.DipDeg)
	if dip == nil || !(dip.Spec.Kind == sampler.Uniform && dip.Spec.Min > 0) {
		t.Errorf("demo dip %+v, want a uniform up-dip range", dip)
	}
	for _, p := range []engine.Param{engine.DipDeg, engine.Rho1, engine.Rho2, engine.PermMD} {
		if _, fixed := s.Fixed(p); fixed {
			t.Errorf("demo %v is fixed, want uncertain", p)
		}
	}
	if s.Phases != (Phases{"water", "oil"}) {
		t.Errorf("phases %+v", s.Phases)
	}
	// DemoSource returns a copy.
	b := DemoSource()
	b[0] = 'X'
	if DemoSource()[0] == 'X' {
		t.Errorf("DemoSource shares its bytes")
	}
}

func TestInitTemplate(t *testing.T) {
	t.Parallel()
	tpl := InitTemplate()
	if _, err := Parse("init.yaml", tpl); err != nil {
		t.Fatalf("template does not parse:\n%s", listText(err))
	}
	text := string(tpl)
	// Every key and every form of a value is shown.
	want := append([]string{}, topKeys...)
	want = append(want, phaseKeys...)
	want = append(want, reportKeys...)
	want = append(want, tornadoKeys...)
	want = append(want, sensitivityKeys...)
	want = append(want, paramNames()...)
	want = append(want, "dist: uniform", "dist: triangular", "dist: pert", "dist: normal", "dist: lognormal", "dist: discrete", "weights:", "same_as:", "lhs", "random", "exceedance", "cumulative")
	for _, w := range want {
		if !strings.Contains(text, w) {
			t.Errorf("template does not mention %q", w)
		}
	}
	// Every line is a comment, a key or a list item: no stray text.
	for i, l := range strings.Split(strings.TrimSuffix(text, "\n"), "\n") {
		if l != "" && !strings.HasPrefix(strings.TrimSpace(l), "#") && !strings.Contains(l, ":") && !strings.HasPrefix(strings.TrimSpace(l), "- ") {
			t.Errorf("template line %d %q", i+1, l)
		}
	}
}

// gravityNumber is DESIGN §2's G = k (rho1 − rho2) g sin(dip) / (mu2 u) in
// SI units from study units: 1 mD = 9.869233e-16 m², 1 mPa·s = 1e-3 Pa·s,
// 1 m/day = 1/86400 m/s, g = 9.80665 m/s².
func gravityNumber(permMD, rho1, rho2, dipDeg, mu2CP, uMPerDay float64) float64 {
	k := permMD * 9.869233e-16
	return k * (rho1 - rho2) * 9.80665 * math.Sin(dipDeg*math.Pi/180) / (mu2CP * 1e-3 * uMPerDay / 86400)
}

// middle returns the centre of a fixed, uniform or lognormal spec: the
// value of a fixed one, the midpoint of a uniform range and, for a
// lognormal of mean m and sd s, its median m/√(1+s²/m²) (derived: with
// σ² = ln(1+s²/m²) the mean is exp(μ+σ²/2), and the median is exp(μ)),
// ignoring truncation.
func middle(t *testing.T, s *Study, p engine.Param) float64 {
	t.Helper()
	q, ok := s.Lookup(p)
	if !ok {
		t.Fatalf("%v not given", p)
	}
	sp := q.Spec
	switch sp.Kind {
	case sampler.Fixed:
		return sp.Value
	case sampler.Uniform:
		return (sp.Min + sp.Max) / 2
	case sampler.LogNormal:
		return sp.Mean / math.Sqrt(1+sp.SD*sp.SD/(sp.Mean*sp.Mean))
	}
	t.Fatalf("%v: no middle for %v", p, sp.Kind)
	return 0
}

// TestExampleScenarios checks that the examples are the scenarios their
// comments describe.
func TestExampleScenarios(t *testing.T) {
	t.Parallel()
	t.Run("steep block", func(t *testing.T) {
		s, err := Load(filepath.Join("examples", "steep-block-gravity.yaml"))
		if err != nil {
			t.Fatal(listText(err))
		}
		g := gravityNumber(middle(t, s, engine.PermMD), middle(t, s, engine.Rho1), middle(t, s, engine.Rho2),
			middle(t, s, engine.DipDeg), middle(t, s, engine.Mu2CP), middle(t, s, engine.VelocityMPerDay))
		// The file says "about +17": gravity-stable (heavy phase up-dip) and tens.
		if !(g > 15 && g < 19) {
			t.Errorf("G at the middle of the ranges = %.2f, want about +17", g)
		}
	})
	t.Run("CO2 into brine", func(t *testing.T) {
		s, err := Load(filepath.Join("examples", "co2-brine-updip.yaml"))
		if err != nil {
			t.Fatal(listText(err))
		}
		if v, fixed := s.Fixed(engine.S1Init); !fixed || v != 0 {
			t.Errorf("s1_init = %g, %v; want fixed 0", v, fixed)
		}
		s1r, _ := s.Lookup(engine.S1r)
		if s1r.Spec.Kind != sampler.Uniform || s1r.Spec.Min != 0.02 || s1r.Spec.Max != 0.08 {
			t.Errorf("s1r %+v, want a critical gas saturation uniform 0.02–0.08", s1r.Spec)
		}
		rho1, _ := s.Lookup(engine.Rho1)
		rho2, _ := s.Lookup(engine.Rho2)
		mu1, _ := s.Lookup(engine.Mu1CP)
		mu2, _ := s.Lookup(engine.Mu2CP)
		if !(rho1.Spec.Max < rho2.Spec.Min && mu1.Spec.Max < mu2.Spec.Min) {
			t.Errorf("CO2 must be lighter and less viscous than brine: rho1 %+v rho2 %+v mu1 %+v mu2 %+v", rho1.Spec, rho2.Spec, mu1.Spec, mu2.Spec)
		}
		dip, _ := s.Lookup(engine.DipDeg)
		if !(dip.Spec.Min > 0) {
			t.Errorf("dip %+v, want up-dip flow", dip.Spec)
		}
	})
}
