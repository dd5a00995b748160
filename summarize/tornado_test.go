package summarize

import (
	"errors"
	"math"
	"slices"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/sampler"
	"github.com/sweepstat/sweepstat/studies"
)

// narrowStudy is an invented waterflood in which only
// mu2_cp varies widely; s1_init, s2r, kr1_max and n1 vary narrowly, s1r
// follows s1_init, and dip_deg varies although rho1 == rho2, so the gravity
// number G = k (rho1 − rho2) g sin(dip) / (mu2 u) is 0 whatever the dip
// (DESIGN §2) and dip_deg can change no output.
const narrowStudy = `name: narrow-check
cases: 100
seed: 11
parameters:
  s1_init: {dist: uniform, min: 0.10, max: 0.12}
  s1r: {same_as: s1_init}
  s2r: {dist: uniform, min: 0.20, max: 0.21}
  kr1_max: {dist: uniform, min: 0.30, max: 0.31}
  kr2_max: 0.9
  n1: {dist: uniform, min: 2.0, max: 2.05}
  n2: 2
  mu1_cp: 0.5
  mu2_cp: {dist: uniform, min: 1, max: 20}
  dip_deg: {dist: uniform, min: -10, max: 10}
  rho1: 1000
  rho2: 1000
  perm_md: 100
  velocity_m_per_day: 0.3
report:
  pvi: [0.25, 0.5, 1, 2]
`

// mustInputs parses a study, builds its design from Specs and returns its
// Inputs.
func mustInputs(t *testing.T, yaml string) (*studies.Study, *sampler.Design, *Inputs) {
	t.Helper()
	st, err := studies.Parse("test.yaml", []byte(yaml))
	if err != nil {
		t.Fatal(err)
	}
	d, err := sampler.New(st.Specs(), sampler.LHS, st.Seed, st.Cases, nil)
	if err != nil {
		t.Fatal(err)
	}
	in, err := NewInputs(st, d)
	if err != nil {
		t.Fatal(err)
	}
	return st, d, in
}

// medians returns the engine case with every parameter at its design
// median, built from the design alone (a fixed parameter's marginal is a
// point mass, a follower's its leader's).
func medians(st *studies.Study, d *sampler.Design) engine.Params {
	row := make([]float64, d.NumParams())
	for j := range row {
		row[j] = d.Quantile(j, 0.5)
	}
	return st.Case(row)
}

func outputsOf(p engine.Params, pvi []float64, cutLimit float64) []float64 {
	var s engine.Solver
	var r engine.Result
	s.SolveCase(&p, pvi, cutLimit, &r)
	outs := engine.Outputs(pvi)
	v := make([]float64, len(outs))
	for k, o := range outs {
		v[k] = o.Get(&r)
	}
	return v
}

// sameBits reports whether a and b are the same float64, NaN equal to NaN.
func sameBits(a, b float64) bool {
	return math.Float64bits(a) == math.Float64bits(b) || (math.IsNaN(a) && math.IsNaN(b))
}

func TestNewInputs(t *testing.T) {
	t.Parallel()
	st, d, in := mustInputs(t, narrowStudy)
	// The leaders are the parameters with a distribution of their own, in
	// engine order; s1r is a follower of s1_init (the study text above).
	var got []string
	for _, l := range in.Leaders {
		got = append(got, l.Name())
	}
	want := []string{"s1_init", "s2r", "kr1_max", "n1", "mu2_cp", "dip_deg"}
	if !slices.Equal(got, want) {
		t.Errorf("leaders %v, want %v", got, want)
	}
	if !slices.Equal(in.Names(), want) {
		t.Errorf("Names() = %v, want %v", in.Names(), want)
	}
	if f := in.Leaders[0].Followers; !slices.Equal(f, []engine.Param{engine.S1r}) {
		t.Errorf("followers of s1_init %v, want [s1r]", f)
	}
	for _, l := range in.Leaders[1:] {
		if l.Followers != nil {
			t.Errorf("%s has followers %v", l.Name(), l.Followers)
		}
	}
	// Base: the design medians; for a uniform, (min + max)/2 (closed form).
	if in.Base != medians(st, d) {
		t.Errorf("Base = %v, want the design medians %v", in.Base, medians(st, d))
	}
	for _, c := range []struct {
		p    engine.Param
		want float64
	}{
		{engine.S1Init, 0.11}, {engine.S1r, 0.11}, {engine.S2r, 0.205}, {engine.Mu2CP, 10.5},
		{engine.DipDeg, 0}, {engine.Kr2Max, 0.9}, {engine.Rho1, 1000}, {engine.PermMD, 100},
	} {
		if !scalar.EqualWithinAbsOrRel(in.Base[c.p], c.want, 1e-15, 1e-15) {
			t.Errorf("Base[%s] = %v, want %v", c.p, in.Base[c.p], c.want)
		}
	}
	for k, l := range in.Leaders {
		j := int(l.Param)
		for _, p := range []float64{0.01, 0.1, 0.5, 0.9, 0.99} {
			if got, want := l.Quantile(p), d.Quantile(j, p); got != want {
				t.Errorf("leader %d Quantile(%v) = %v, design %v", k, p, got, want)
			}
		}
	}
}

func TestNewInputsMismatch(t *testing.T) {
	t.Parallel()
	st, err := studies.Parse("test.yaml", []byte(narrowStudy))
	if err != nil {
		t.Fatal(err)
	}
	specs := st.Specs()
	slices.Reverse(specs)
	d, err := sampler.New(specs, sampler.LHS, 1, 10, nil)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := NewInputs(st, d); !errors.Is(err, ErrInputs) {
		t.Errorf("NewInputs with a design in reverse order: err = %v, want ErrInputs", err)
	}
	short, err := sampler.New(st.Specs()[:3], sampler.LHS, 1, 10, nil)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := NewInputs(st, short); !errors.Is(err, ErrInputs) {
		t.Errorf("NewInputs with 3 design parameters: err = %v, want ErrInputs", err)
	}
	if _, err := NewInputs(nil, short); !errors.Is(err, ErrInputs) {
		t.Errorf("NewInputs(nil, d): err = %v, want ErrInputs", err)
	}
}

func TestTornado(t *testing.T) {
	t.Parallel()
	st, d, in := mustInputs(t, narrowStudy)
	pvi, cut := st.Report.PVI, st.Report.CutLimit
	const low, high = 0.1, 0.9
	rows := Tornado(in, pvi, cut, low, high)
	outs := engine.Outputs(pvi)
	nl := len(in.Leaders)
	if len(rows) != len(outs)*nl {
		t.Fatalf("%d rows, want %d outputs × %d leaders", len(rows), len(outs), nl)
	}
	byKey := make(map[[2]string]TornadoRow)
	for i, r := range rows {
		// Ordered by output in engine order, then rank 1…nl.
		if want := outs[i/nl].Name; r.Output != want {
			t.Fatalf("row %d output %s, want %s", i, r.Output, want)
		}
		if r.Rank != i%nl+1 {
			t.Errorf("row %d (%s, %s) rank %d, want %d", i, r.Output, r.Parameter, r.Rank, i%nl+1)
		}
		byKey[[2]string{r.Output, r.Parameter}] = r
	}
	base := outputsOf(medians(st, d), pvi, cut)
	for i, r := range rows {
		if !sameBits(r.OutputBase, base[i/nl]) {
			t.Errorf("%s: OutputBase %v, engine at the medians %v", r.Output, r.OutputBase, base[i/nl])
		}
		if !sameBits(r.Swing, math.Abs(r.OutputAtHigh-r.OutputAtLow)) {
			t.Errorf("%s/%s: swing %v ≠ |%v − %v|", r.Output, r.Parameter, r.Swing, r.OutputAtHigh, r.OutputAtLow)
		}
		if i%nl > 0 && rows[i-1].Swing < r.Swing {
			t.Errorf("%s: swing %v ranked below %v", r.Output, rows[i-1].Swing, r.Swing)
		}
	}

	// Inputs: the design quantiles; for these uniforms min + p·(max − min).
	for _, c := range []struct {
		name          string
		min, max, med float64
	}{
		{"s1_init", 0.10, 0.12, 0.11}, {"mu2_cp", 1, 20, 10.5}, {"dip_deg", -10, 10, 0},
	} {
		r := byKey[[2]string{engine.ColBreakthroughPVI, c.name}]
		j, _ := d.Index(c.name)
		if r.InputLow != d.Quantile(j, low) || r.InputHigh != d.Quantile(j, high) || r.InputBase != d.Quantile(j, 0.5) {
			t.Errorf("%s inputs %v %v %v, design quantiles %v %v %v", c.name, r.InputLow, r.InputBase, r.InputHigh,
				d.Quantile(j, low), d.Quantile(j, 0.5), d.Quantile(j, high))
		}
		for _, v := range []struct{ got, want float64 }{
			{r.InputLow, c.min + low*(c.max-c.min)}, {r.InputBase, c.med}, {r.InputHigh, c.min + high*(c.max-c.min)},
		} {
			if !scalar.EqualWithinAbsOrRel(v.got, v.want, 1e-14, 1e-14) {
				t.Errorf("%s input %v, want %v (uniform quantile)", c.name, v.got, v.want)
			}
		}
	}

	// mu2_cp, the only wide range, ranks first for breakthrough (a larger
	// resident viscosity gives an earlier breakthrough, Buckley & Leverett
	// 1942): OutputAtHigh < OutputAtLow.
	if r := rows[slices.IndexFunc(rows, func(r TornadoRow) bool { return r.Output == engine.ColBreakthroughPVI })]; r.Parameter != "mu2_cp" || !(r.OutputAtHigh < r.OutputAtLow) {
		t.Errorf("breakthrough_pvi rank 1: %+v, want mu2_cp with an earlier breakthrough at the high viscosity", r)
	}
	// dip_deg cannot change any output (G ≡ 0, see the study), so its swing
	// is exactly 0 wherever the output is defined.
	for _, o := range outs {
		r := byKey[[2]string{o.Name, "dip_deg"}]
		if !math.IsNaN(r.OutputBase) && r.Swing != 0 {
			t.Errorf("%s: dip_deg swing %v, want 0", o.Name, r.Swing)
		}
	}
	// Before breakthrough the outlet produces phase 2 only, so with
	// f(s1_init) = 0 (s1r = s1_init, Corey kr1 = 0 there) Welge's average
	// gives recovery = tD/(1 − s1_init) (DESIGN §2): at tD = 0.25, below every
	// breakthrough here (≈ 0.30 at the highest viscosity), only s1_init
	// moves it, and every other swing is exactly 0, the ties kept in leader
	// order.
	rec := engine.CheckpointColumn("recovery", 0.25)
	var order []string
	for _, r := range rows {
		if r.Output != rec {
			continue
		}
		order = append(order, r.Parameter)
		if r.Parameter == "s1_init" {
			for _, v := range []struct{ got, in float64 }{{r.OutputAtLow, r.InputLow}, {r.OutputAtHigh, r.InputHigh}, {r.OutputBase, r.InputBase}} {
				if want := 0.25 / (1 - v.in); !scalar.EqualWithinAbsOrRel(v.got, want, 1e-13, 1e-13) {
					t.Errorf("%s at s1_init = %v: %v, want 0.25/(1 − s1_init) = %v", rec, v.in, v.got, want)
				}
			}
		} else if r.Swing != 0 {
			t.Errorf("%s: %s swing %v, want 0", rec, r.Parameter, r.Swing)
		}
	}
	if want := []string{"s1_init", "s2r", "kr1_max", "n1", "mu2_cp", "dip_deg"}; !slices.Equal(order, want) {
		t.Errorf("%s ranking %v, want %v", rec, order, want)
	}
	// max_recovery = (1 − s2r − s1_init)/(1 − s1_init) without strong
	// gravity (DESIGN §2).
	for _, name := range []string{"s1_init", "s2r"} {
		r := byKey[[2]string{engine.ColMaxRecovery, name}]
		for _, v := range []struct{ got, in float64 }{{r.OutputAtLow, r.InputLow}, {r.OutputAtHigh, r.InputHigh}} {
			s1, s2 := in.Base[engine.S1Init], in.Base[engine.S2r]
			if name == "s1_init" {
				s1 = v.in
			} else {
				s2 = v.in
			}
			if want := (1 - s2 - s1) / (1 - s1); !scalar.EqualWithinAbsOrRel(v.got, want, 1e-13, 1e-13) {
				t.Errorf("max_recovery with %s = %v: %v, want %v", name, v.in, v.got, want)
			}
		}
	}

	// Followers: s1r moves with s1_init. Solve the low and high cases
	// directly and compare every output bit for bit; moving s1_init alone
	// gives a different case.
	j, _ := d.Index("s1_init")
	for _, end := range []struct {
		q   float64
		get func(TornadoRow) float64
	}{
		{low, func(r TornadoRow) float64 { return r.OutputAtLow }},
		{high, func(r TornadoRow) float64 { return r.OutputAtHigh }},
	} {
		p := medians(st, d)
		p[engine.S1Init] = d.Quantile(j, end.q)
		alone := outputsOf(p, pvi, cut)
		p[engine.S1r] = p[engine.S1Init]
		both := outputsOf(p, pvi, cut)
		differ := false
		for k, o := range outs {
			r := byKey[[2]string{o.Name, "s1_init"}]
			if !sameBits(end.get(r), both[k]) {
				t.Errorf("%s at s1_init quantile %v: %v, engine with s1r = s1_init %v", o.Name, end.q, end.get(r), both[k])
			}
			differ = differ || !sameBits(alone[k], both[k])
		}
		if !differ {
			t.Errorf("moving s1_init without s1r changes no output at quantile %v: the follower check proves nothing", end.q)
		}
	}
}

// rejectStudy has an invalid base case: the median s2r = 0.85 breaks
// s1_init < 1 − s2r (0.2 < 0.15 is false); its low quantile 0.77 is valid
// and its high quantile 0.93 is not (DESIGN §2 validity).
const rejectStudy = `name: reject-check
cases: 10
parameters:
  s1_init: 0.2
  s1r: 0
  s2r: {dist: uniform, min: 0.75, max: 0.95}
  kr1_max: 0.5
  kr2_max: 0.9
  n1: 2
  n2: 2
  mu1_cp: 0.5
  mu2_cp: {dist: uniform, min: 1, max: 5}
`

func TestTornadoRejected(t *testing.T) {
	t.Parallel()
	st, _, in := mustInputs(t, rejectStudy)
	pvi, cut := st.Report.PVI, st.Report.CutLimit
	if r := in.BaseResult(pvi, cut); r.Status != engine.StatusInvalid {
		t.Fatalf("base status %v (%s), want invalid", r.Status, r.StatusText())
	}
	rows := Tornado(in, pvi, cut, 0.1, 0.9)
	for _, r := range rows {
		if !math.IsNaN(r.OutputBase) {
			t.Errorf("%s: OutputBase %v with a rejected base case, want NaN", r.Output, r.OutputBase)
		}
		// Moving mu2_cp keeps s2r at its invalid median: both ends NaN.
		// Moving s2r: a valid low end and a rejected high end, NaN swing.
		if !math.IsNaN(r.Swing) {
			t.Errorf("%s/%s swing %v, want NaN", r.Output, r.Parameter, r.Swing)
		}
		if r.Parameter == "s2r" && r.Output == engine.ColMaxRecovery {
			// (1 − 0.77 − 0.2)/(1 − 0.2), DESIGN §2.
			if want := (1 - 0.77 - 0.2) / 0.8; !scalar.EqualWithinAbsOrRel(r.OutputAtLow, want, 1e-12, 1e-12) {
				t.Errorf("max_recovery at s2r low: %v, want %v", r.OutputAtLow, want)
			}
		}
	}
}

func TestRankSwings(t *testing.T) {
	t.Parallel()
	nan, inf := math.NaN(), math.Inf(1)
	tests := []struct {
		name   string
		swings []float64
		want   []string // parameters in rank order; parameter k is "p<k>"
	}{
		{"distinct", []float64{1, 3, 2}, []string{"p1", "p2", "p0"}},
		{"ties keep order", []float64{2, 5, 2, 5}, []string{"p1", "p3", "p0", "p2"}},
		{"NaN last", []float64{nan, 1, nan, 0}, []string{"p1", "p3", "p0", "p2"}},
		{"Inf first", []float64{1, inf, nan}, []string{"p1", "p0", "p2"}},
		{"zeros", []float64{0, math.Copysign(0, -1), 0}, []string{"p0", "p1", "p2"}},
		{"empty", nil, nil},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			rows := make([]TornadoRow, len(tc.swings))
			for k, s := range tc.swings {
				rows[k] = TornadoRow{Parameter: "p" + string(rune('0'+k)), Swing: s}
			}
			rankSwings(rows)
			var got []string
			for i, r := range rows {
				got = append(got, r.Parameter)
				if r.Rank != i+1 {
					t.Errorf("row %d rank %d", i, r.Rank)
				}
			}
			if !slices.Equal(got, tc.want) {
				t.Errorf("swings %v: order %v, want %v", tc.swings, got, tc.want)
			}
		})
	}
}

func TestTornadoPanics(t *testing.T) {
	t.Parallel()
	in := &Inputs{Base: engine.DefaultParams()}
	for _, q := range [][2]float64{{0, 0.9}, {0.1, 1}, {math.NaN(), 0.5}, {-0.1, 0.5}} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("Tornado(low %v, high %v) did not panic", q[0], q[1])
				}
			}()
			Tornado(in, nil, 0.98, q[0], q[1])
		}()
	}
	// No leaders: no rows, no panic.
	if rows := Tornado(in, []float64{1}, 0.98, 0.1, 0.9); len(rows) != 0 {
		t.Errorf("Tornado without leaders: %d rows", len(rows))
	}
}
