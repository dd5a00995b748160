package studies_test

import (
	"errors"
	"fmt"

	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/studies"
)

func ExampleParse() {
	src := []byte(`name: example
cases: 500
parameters:
  s1_init: 0.2
  s1r: {same_as: s1_init}
  s2r: {dist: triangular, min: 0.15, mode: 0.25, max: 0.35}
  kr1_max: {dist: uniform, min: 0.2, max: 0.5}
  kr2_max: 0.85
  n1: {dist: uniform, min: 1.5, max: 4}
  n2: {dist: uniform, min: 1.5, max: 3.5}
  mu1_cp: 0.5
  mu2_cp: {dist: lognormal, mean: 3, sd: 1.2}
`)
	s, err := studies.Parse("example.yaml", src)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(s.Name, s.Cases, s.Sampling, s.Report.PVI, s.Report.Percentiles)
	fmt.Println(s.Uncertain())
	v, fixed := s.Fixed(engine.S1r)
	fmt.Println("s1r fixed:", v, fixed)
	// Output:
	// example 500 lhs [0.25 0.5 1 2 3] exceedance
	// [s2r kr1_max n1 n2 mu2_cp]
	// s1r fixed: 0.2 true
}

func ExampleErrorList() {
	src := []byte(`name: broken
cases: 0
parameters:
  s1_init: 0.2
  s1r: 0.1
  s2r: {dist: triangular, min: 0.15, max: 0.35}
  kr1_max: 0.4
  kr2_max: 1.5
  n1: 2
  n2: 2
  mu1_cp: 0.5
  mu2cp: 3
`)
	_, err := studies.Parse("broken.yaml", src)
	var list studies.ErrorList
	if errors.As(err, &list) {
		for _, e := range list {
			fmt.Println(e)
		}
	}
	fmt.Println(errors.Is(err, studies.ErrUnknownKey))
	// Output:
	// broken.yaml:2:8: cases: must be from 1 to 2147483647, got 0
	// broken.yaml:3:1: parameters.mu2_cp: required parameter mu2_cp is missing (is "mu2cp" at line 12 meant to be mu2_cp?)
	// broken.yaml:6:8: parameters.s2r.mode: triangular needs mode
	// broken.yaml:8:12: parameters.kr2_max: kr2_max = 1.5 breaks 0 < kr2_max ≤ 1
	// broken.yaml:12:3: parameters.mu2cp: unknown parameter "mu2cp"; did you mean mu2_cp?
	// true
}
