package studies

import (
	"errors"
	"testing"
)

func TestErrorText(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		e    Error
		want string
	}{
		{Error{File: "a.yaml", Line: 3, Column: 7, Path: "parameters.s2r.mode", Err: ErrMissing, Msg: "triangular needs mode"}, "a.yaml:3:7: parameters.s2r.mode: triangular needs mode"},
		{Error{File: "a.yaml", Line: 3, Err: ErrSyntax, Msg: "YAML syntax error: x"}, "a.yaml:3: YAML syntax error: x"},
		{Error{File: "a.yaml", Err: ErrValue, Msg: "too big"}, "a.yaml: too big"},
		{Error{Line: 2, Column: 1, Path: "cases", Err: ErrValue}, "2:1: cases: invalid value"},
		{Error{Path: "seed", Msg: "m"}, "seed: m"},
		{Error{}, "error"},
	} {
		if got := tc.e.Error(); got != tc.want {
			t.Errorf("got %q, want %q", got, tc.want)
		}
	}
	e := &Error{Err: ErrCycle}
	if !errors.Is(e, ErrCycle) || errors.Is(e, ErrValue) {
		t.Errorf("Unwrap")
	}
}

func TestErrorList(t *testing.T) {
	t.Parallel()
	var l ErrorList
	if l.Err() != nil || l.Error() != "no errors" {
		t.Fatalf("empty list: %v %q", l.Err(), l.Error())
	}
	l.Add(&Error{File: "f", Line: 5, Column: 2, Path: "b", Err: ErrValue, Msg: "second"})
	l.Add(&Error{File: "f", Line: 2, Column: 9, Path: "a", Err: ErrType, Msg: "first"})
	l.Add(&Error{File: "f", Line: 5, Column: 2, Path: "a", Err: ErrValue, Msg: "tie"})
	l.Sort()
	if l[0].Msg != "first" || l[1].Msg != "tie" || l[2].Msg != "second" {
		t.Errorf("sorted: %v %v %v", l[0], l[1], l[2])
	}
	if got := l.Error(); got != "f:2:9: a: first (and 2 more errors)" {
		t.Errorf("Error() = %q", got)
	}
	if got := l[:2].Error(); got != "f:2:9: a: first (and 1 more error)" {
		t.Errorf("Error() = %q", got)
	}
	err := l.Err()
	if !errors.Is(err, ErrType) || !errors.Is(err, ErrValue) || errors.Is(err, ErrCycle) {
		t.Errorf("errors.Is through the list")
	}
	if (Pos{}).String() != "-" || (Pos{4, 0}).String() != "4" || (Pos{4, 2}).String() != "4:2" {
		t.Errorf("Pos.String")
	}
}

func TestSuggest(t *testing.T) {
	t.Parallel()
	names := paramNames()
	for _, tc := range []struct{ in, want string }{
		{"mu2cp", "mu2_cp"},                // one deletion
		{"mu_2cp", "mu2_cp"},               // one swap
		{"MU2_CP", "mu2_cp"},               // case
		{"velocity", "velocity_m_per_day"}, // prefix
		{"dip", "dip_deg"},                 // prefix
		{"dip_degrees", "dip_deg"},         // the known name is a prefix
		{"s1_int", "s1_init"},
		{"kr3_max", "kr1_max"},
		{"porosity", "porosity"},
		{"permeability", ""},
		{"x", ""},
	} {
		if got := suggest(tc.in, names); got != tc.want {
			t.Errorf("suggest(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
	if got := suggest("triangle", distNames); got != "triangular" {
		t.Errorf("suggest(triangle) = %q", got)
	}
	// Levenshtein (1966) distances, with a swap counting one (Damerau 1964):
	// kitten → sitting is the textbook 3.
	for _, tc := range []struct {
		a, b string
		d    int
	}{{"kitten", "sitting", 3}, {"", "abc", 3}, {"ab", "ba", 1}, {"ca", "abc", 3}, {"naïve", "naive", 1}} {
		if got := editDistance(tc.a, tc.b); got != tc.d {
			t.Errorf("editDistance(%q, %q) = %d, want %d", tc.a, tc.b, got, tc.d)
		}
	}
}
