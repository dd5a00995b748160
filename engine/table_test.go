package engine

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/interp"
)

// coreyRows samples Corey curves (Corey 1954) at n rows evenly spaced over
// the mobile window [s1r, 1 − s2r], plus a row at S = 0 below it and one
// at S = 1 above it, which only locate the window.
func coreyRows(c *Corey, n int) (s, kr1, kr2 []float64) {
	span := 1 - c.S1r - c.S2r
	s, kr1, kr2 = []float64{0}, []float64{0}, []float64{c.Kr2Max}
	for k := range n {
		se := float64(k) / float64(n-1)
		s = append(s, c.S1r+se*span)
		kr1 = append(kr1, c.Kr1Max*math.Pow(se, c.N1))
		kr2 = append(kr2, c.Kr2Max*math.Pow(1-se, c.N2))
	}
	s[len(s)-1] = 1 - c.S2r
	s = append(s, 1)
	kr1 = append(kr1, c.Kr1Max)
	kr2 = append(kr2, 0)
	return s, kr1, kr2
}

func mustTable(t testing.TB, name string, s, kr1, kr2 []float64) *Table {
	t.Helper()
	tab, err := NewTable(name, s, kr1, kr2)
	if err != nil {
		t.Fatalf("NewTable(%s): %v", name, err)
	}
	return tab
}

// ownScale returns the table scaled to its own end points.
func ownScale(tab *Table) *ScaledTable {
	s1r, s2r, k1, k2 := tab.EndPoints()
	return &ScaledTable{T: tab, S1r: s1r, S2r: s2r, Kr1Max: k1, Kr2Max: k2}
}

// TestTableEndPoints: a table's end points are read off its rows (the
// rules of NewTable), and the scaled table reproduces every row.
func TestTableEndPoints(t *testing.T) {
	t.Parallel()
	c := Corey{S1r: 0.15, S2r: 0.2, Kr1Max: 0.45, Kr2Max: 0.85, N1: 2.5, N2: 1.8}
	s, kr1, kr2 := coreyRows(&c, 11)
	tab := mustTable(t, "core-a", s, kr1, kr2)
	s1r, s2r, k1, k2 := tab.EndPoints()
	if s1r != 0.15 || math.Abs(s2r-0.2) > 1e-15 || k1 != 0.45 || k2 != 0.85 || tab.Name() != "core-a" {
		t.Errorf("end points %v, %v, %v, %v, name %q; want 0.15, 0.2, 0.45, 0.85, core-a", s1r, s2r, k1, k2, tab.Name())
	}
	st := ownScale(tab)
	for i := range s {
		v := st.Eval(s[i])
		if math.Abs(v.Kr1-kr1[i]) > 1e-15 || math.Abs(v.Kr2-kr2[i]) > 1e-15 {
			t.Errorf("row %d S=%v: kr = %v, %v; table has %v, %v", i, s[i], v.Kr1, v.Kr2, kr1[i], kr2[i])
		}
	}
	// Two-point scaling to other end points (Se-wise the same curves).
	sc := ScaledTable{T: tab, S1r: 0.05, S2r: 0.3, Kr1Max: 0.9, Kr2Max: 0.5}
	for i := 1; i+1 < len(s); i++ {
		se := (s[i] - 0.15) / 0.65
		v := sc.Eval(0.05 + se*0.65)
		if math.Abs(v.Kr1-0.9*kr1[i]/0.45) > 1e-14 || math.Abs(v.Kr2-0.5*kr2[i]/0.85) > 1e-14 {
			t.Errorf("scaled row %d: kr = %v, %v; want %v, %v", i, v.Kr1, v.Kr2, 0.9*kr1[i]/0.45, 0.5*kr2[i]/0.85)
		}
	}
	if v := sc.Eval(0.01); v.Kr1 != 0 || v.Kr2 != 0.5 || v.DKr1 != 0 {
		t.Errorf("below S1r: %+v, want flat kr1 = 0, kr2 = Kr2Max", v)
	}
	if v := sc.Eval(0.71); v.Kr1 != 0.9 || v.Kr2 != 0 || v.DKr2 != 0 {
		t.Errorf("above 1 − S2r: %+v, want flat kr1 = Kr1Max, kr2 = 0", v)
	}
}

// randomMonotone returns n strictly increasing knots from 0 to 1 and
// random monotone data on them: y1 non-decreasing from 0 to 1, y2
// non-increasing from 1 to 0, both with flat stretches and jumps, y1 > 0
// after the first knot and y2 > 0 before the last (so the whole table is
// its mobile window).
func randomMonotone(rng *rand.Rand, n int) (x, y1, y2 []float64) {
	x = make([]float64, n)
	for i := 1; i < n; i++ {
		x[i] = x[i-1] + 0.05 + rng.Float64()*rng.Float64()
	}
	steps := func() []float64 {
		y := make([]float64, n)
		for i := 1; i < n; i++ {
			d := rng.Float64()
			if i > 1 && rng.IntN(4) == 0 {
				d = 0 // a flat stretch
			}
			y[i] = y[i-1] + d*d
		}
		return y
	}
	a, b := steps(), steps()
	y1, y2 = make([]float64, n), make([]float64, n)
	for i := range n {
		x[i] /= x[n-1]
		y1[i] = a[i] / a[n-1]
		y2[n-1-i] = b[i] / b[n-1]
	}
	x[n-1], y1[n-1], y2[0] = 1, 1, 1
	return x, y1, y2
}

// TestTableMatchesGonum compares the table's interpolant with gonum's
// interp.FritschButland (an independent implementation of the same
// Fritsch & Butland 1984 slopes) on random monotone data: values and
// derivatives at random points and at the knots within 1e-12, and checks
// that it is monotone (Fritsch & Carlson 1980) and stays in [0, 1].
func TestTableMatchesGonum(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(8, 8))
	for trial := range 200 {
		n := 3 + rng.IntN(60)
		x, y1, y2 := randomMonotone(rng, n)
		tab := mustTable(t, "random", x, y1, y2)
		if s1r, s2r, k1, k2 := tab.EndPoints(); s1r != 0 || s2r != 0 || k1 != 1 || k2 != 1 {
			t.Fatalf("trial %d: end points %v %v %v %v, want 0 0 1 1", trial, s1r, s2r, k1, k2)
		}
		st := ScaledTable{T: tab, Kr1Max: 1, Kr2Max: 1} // Se = S
		var fb1, fb2 interp.FritschButland
		if err := fb1.Fit(x, y1); err != nil {
			t.Fatal(err)
		}
		if err := fb2.Fit(x, y2); err != nil {
			t.Fatal(err)
		}
		pts := append([]float64(nil), x[1:n-1]...)
		for range 50 {
			pts = append(pts, rng.Float64())
		}
		for _, s := range pts {
			v := st.Eval(s)
			for _, c := range []struct {
				name      string
				got, want float64
			}{
				{"kr1", v.Kr1, fb1.Predict(s)}, {"kr2", v.Kr2, fb2.Predict(s)},
				{"kr1'", v.DKr1, fb1.PredictDerivative(s)}, {"kr2'", v.DKr2, fb2.PredictDerivative(s)},
			} {
				if math.Abs(c.got-c.want) > 1e-12*(1+math.Abs(c.want)) {
					t.Errorf("trial %d (n=%d) at S=%v: %s = %.16g, gonum %.16g", trial, n, s, c.name, c.got, c.want)
				}
			}
		}
		prev := st.Eval(0)
		for k := 1; k <= 2000; k++ {
			v := st.Eval(float64(k) / 2000)
			if v.Kr1 < prev.Kr1 || v.Kr2 > prev.Kr2 || v.Kr1 < 0 || v.Kr1 > 1 || v.Kr2 < 0 || v.Kr2 > 1 ||
				v.DKr1 < -1e-12 || v.DKr2 > 1e-12 {
				t.Errorf("trial %d: not monotone in [0, 1] at S=%v: %+v after %+v", trial, float64(k)/2000, v, prev)
				break
			}
			prev = v
		}
	}
}

// TestTableDerivatives compares ScaledTable's derivatives with central
// finite differences (gonum diff/fd) inside the cubic pieces, where the
// curves are smooth, for scaled random tables.
func TestTableDerivatives(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(9, 9))
	for range 100 {
		x, y1, y2 := randomMonotone(rng, 3+rng.IntN(30))
		tab := mustTable(t, "random", x, y1, y2)
		st := ScaledTable{T: tab, S1r: 0.2 * rng.Float64(), S2r: 0.2 * rng.Float64(), Kr1Max: 0.3 + 0.7*rng.Float64(), Kr2Max: 0.3 + 0.7*rng.Float64()}
		span := 1 - st.S1r - st.S2r
		i := rng.IntN(len(x) - 1)
		h := x[i+1] - x[i]
		se := x[i] + h*(0.1+0.8*rng.Float64())
		s := st.S1r + se*span
		v := st.Eval(s)
		set := &fd.Settings{Formula: fd.Central, Step: 1e-5 * h * span}
		for _, c := range []struct {
			name string
			got  float64
			of   func(RelPermValue) float64
		}{
			{"kr1'", v.DKr1, func(v RelPermValue) float64 { return v.Kr1 }},
			{"kr2'", v.DKr2, func(v RelPermValue) float64 { return v.Kr2 }},
			{"kr1″", v.D2Kr1, func(v RelPermValue) float64 { return v.DKr1 }},
			{"kr2″", v.D2Kr2, func(v RelPermValue) float64 { return v.DKr2 }},
		} {
			want := fd.Derivative(func(s float64) float64 { return c.of(st.Eval(s)) }, s, set)
			if math.Abs(c.got-want) > 1e-6*(1+math.Abs(want))/(h*span) {
				t.Errorf("S=%v: %s = %.10g, finite difference %.10g", s, c.name, c.got, want)
			}
		}
	}
}

// TestNewTableErrors: every broken rule is reported, naming the column and
// the 0-based row.
func TestNewTableErrors(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name        string
		s, kr1, kr2 []float64
		want        []string
	}{
		{"two rows", []float64{0, 1}, []float64{0, 1}, []float64{1, 0},
			[]string{"table: 2 rows; a table needs at least 3"}},
		{"row rules", []float64{0, 0.5, 0.4, 1.2}, []float64{0.1, 0.5, 0.4, 1}, []float64{1, 0.5, 0.6, 0},
			[]string{
				"kr1: row 0: must be 0 at the first row, got 0.1",
				"s: row 2: must increase from row to row: 0.4 after 0.5",
				"kr1: row 2: must not decrease: 0.4 after 0.5",
				"kr2: row 2: must not increase: 0.6 after 0.5",
				"s: row 3: 1.2 is outside [0, 1]",
			}},
		{"no mobile window", []float64{0, 0.5, 1}, []float64{0, 0, 1}, []float64{1, 0, 0},
			[]string{"table: no mobile window: kr1 is 0 up to S = 0.5 and kr2 is 0 from S = 0.5"}},
		{"window too short", []float64{0, 0.2, 0.7, 1}, []float64{0, 0, 0.5, 1}, []float64{1, 0.8, 0, 0},
			[]string{"table: 2 rows in the mobile window S = 0.2 to 0.7; at least 3 are needed"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, err := NewTable("x", tc.s, tc.kr1, tc.kr2)
			var errs TableErrors
			if !errors.As(err, &errs) {
				t.Fatalf("err = %v, want TableErrors", err)
			}
			if len(errs) != len(tc.want) {
				t.Fatalf("got %d errors:\n%v\nwant %d: %q", len(errs), err, len(tc.want), tc.want)
			}
			for i, e := range errs {
				if e.Error() != tc.want[i] {
					t.Errorf("error %d = %q, want %q", i, e.Error(), tc.want[i])
				}
			}
		})
	}
}

// TestTableNotAllocating: Eval of a scaled table does not allocate.
func TestTableNotAllocating(t *testing.T) {
	c := Corey{S1r: 0.1, S2r: 0.1, Kr1Max: 0.5, Kr2Max: 0.9, N1: 2, N2: 2}
	s, kr1, kr2 := coreyRowsNoEnds(&c, 21)
	var rel RelPerm = ownScale(mustTable(t, "c", s, kr1, kr2))
	sum := 0.0
	if n := testing.AllocsPerRun(100, func() { sum += rel.Eval(0.33).Kr1 }); n != 0 {
		t.Errorf("Eval allocates %v times", n)
	}
}

// coreyRowsNoEnds is coreyRows without the rows outside the window.
func coreyRowsNoEnds(c *Corey, n int) (s, kr1, kr2 []float64) {
	s, kr1, kr2 = coreyRows(c, n)
	return s[1 : len(s)-1], kr1[1 : len(kr1)-1], kr2[1 : len(kr2)-1]
}
