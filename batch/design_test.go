package batch

import (
	"errors"
	"strings"
	"testing"

	"github.com/sweepstat/sweepstat/studies"
)

// TestNewDesignPositionsSamplerErrors: a correlation matrix that is not
// positive definite is a study error at the entry's line in the file.
func TestNewDesignPositionsSamplerErrors(t *testing.T) {
	t.Parallel()
	src := `name: npd
cases: 100
parameters:
  s1_init: 0.1
  s1r: 0.1
  s2r: {dist: uniform, min: 0.2, max: 0.3}
  kr1_max: {dist: uniform, min: 0.2, max: 0.5}
  kr2_max: {dist: uniform, min: 0.6, max: 0.9}
  n1: 2
  n2: 2
  mu1_cp: 0.5
  mu2_cp: 2
correlations:
  - [s2r, kr1_max, 0.9]
  - [kr1_max, kr2_max, 0.9]
  - [s2r, kr2_max, -0.9]
`
	st, err := studies.Parse("npd.yaml", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	_, err = NewDesign(st)
	var list studies.ErrorList
	if !errors.As(err, &list) || len(list) == 0 {
		t.Fatalf("err = %v, want a studies.ErrorList", err)
	}
	msg := err.Error()
	// The second entry (line 15, column 5) is the first that, with those
	// before it, makes the matrix indefinite.
	if !strings.HasPrefix(msg, "npd.yaml:15:5: correlations[1]: ") || !strings.Contains(msg, "not positive definite") {
		t.Errorf("message %q should start npd.yaml:15:5: correlations[1] and say not positive definite", msg)
	}
}
