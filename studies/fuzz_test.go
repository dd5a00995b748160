package studies

import (
	"errors"
	"os"
	"path/filepath"
	"slices"
	"testing"

	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/sampler"
)

// FuzzParse: Parse never panics; it returns either a study that keeps the
// documented invariants or a non-empty, sorted ErrorList of *Error with a
// cause.
func FuzzParse(f *testing.F) {
	f.Add([]byte(baseStudy))
	f.Add([]byte(withDip()))
	f.Add([]byte(minimalStudy))
	f.Add(DemoSource())
	f.Add(InitTemplate())
	for _, tc := range badCases {
		src, _ := markNoT(tc.src)
		f.Add([]byte(src))
	}
	for _, dir := range []string{"examples", corpusDir} {
		files, _ := filepath.Glob(filepath.Join(dir, "*.yaml"))
		for _, file := range files {
			if data, err := os.ReadFile(file); err == nil {
				f.Add(data)
			}
		}
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		s, err := Parse("fuzz.yaml", data)
		if err != nil {
			if s != nil {
				t.Fatalf("a study and an error")
			}
			list, ok := err.(ErrorList)
			if !ok || len(list) == 0 {
				t.Fatalf("error %T %v is not a non-empty ErrorList", err, err)
			}
			for i, e := range list {
				if e == nil || e.Err == nil || e.Error() == "" || e.File != "fuzz.yaml" {
					t.Fatalf("bad entry %d: %#v", i, e)
				}
				if i > 0 && (list[i-1].Line > e.Line || list[i-1].Line == e.Line && list[i-1].Column > e.Column) {
					t.Fatalf("not sorted: %v before %v", list[i-1], e)
				}
			}
			var one *Error
			if !errors.As(err, &one) {
				t.Fatalf("errors.As finds no *Error")
			}
			return
		}
		checkStudy(t, s)
	})
}

// checkStudy checks the invariants every parsed study keeps.
func checkStudy(t *testing.T, s *Study) {
	t.Helper()
	if s.Cases < 1 || s.Cases > MaxCases {
		t.Fatalf("cases %d", s.Cases)
	}
	if s.Name == "" || s.Name[0] == '.' || len(s.Name) > MaxNameLen {
		t.Fatalf("name %q", s.Name)
	}
	if s.Sampling != SamplingLHS && s.Sampling != SamplingRandom {
		t.Fatalf("sampling %q", s.Sampling)
	}
	if s.Report.Percentiles != PercentilesExceedance && s.Report.Percentiles != PercentilesCumulative {
		t.Fatalf("percentiles %q", s.Report.Percentiles)
	}
	if len(s.Report.PVI) == 0 || !slices.IsSorted(s.Report.PVI) || s.Report.PVI[0] <= 0 {
		t.Fatalf("pvi %v", s.Report.PVI)
	}
	if !(s.Report.CutLimit > 0 && s.Report.CutLimit <= 1) || !(0 < s.Tornado.Low && s.Tornado.Low < s.Tornado.High && s.Tornado.High < 1) {
		t.Fatalf("report %+v tornado %+v", s.Report, s.Tornado)
	}
	if s.Sensitivity.Sobol < 0 || s.Sensitivity.Sobol > MaxSobol {
		t.Fatalf("sobol %d", s.Sensitivity.Sobol)
	}
	specs := s.Specs()
	if len(specs) != int(engine.NumParams) {
		t.Fatalf("%d specs", len(specs))
	}
	for i := range specs {
		sp := &specs[i]
		if sp.Kind == sampler.SameAs {
			leader, ok := engine.ParamByName(sp.SameAs)
			if !ok || specs[leader].Kind == sampler.SameAs {
				t.Fatalf("spec %s follows %q, not a root", sp.Name, sp.SameAs)
			}
			continue
		}
		if errs := sp.Validate(); errs != nil {
			t.Fatalf("spec %+v: %v", sp, errs)
		}
	}
	for _, c := range s.Correlations {
		a, okA := engine.ParamByName(c.A)
		b, okB := engine.ParamByName(c.B)
		_, fixedA := s.Fixed(a)
		_, fixedB := s.Fixed(b)
		if !okA || !okB || a == b || fixedA || fixedB || !(c.Rho > -1 && c.Rho < 1) {
			t.Fatalf("correlation %+v", c)
		}
	}
	if len(s.Hash) != 64 {
		t.Fatalf("hash %q", s.Hash)
	}
}

// markNoT is mark without a *testing.T, for seeding the fuzzer.
func markNoT(src string) (string, bool) {
	for i := 0; i+len("§") <= len(src); i++ {
		if src[i:i+len("§")] == "§" {
			return src[:i] + src[i+len("§"):], true
		}
	}
	return src, false
}
