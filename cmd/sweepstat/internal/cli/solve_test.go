package cli

import (
	"encoding/json"
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/studies"
)

// solveOutput is what `solve --json` prints, read back with null as nil.
type solveOutput struct {
	Parameters map[string]*float64 `json:"parameters"`
	Outputs    map[string]*float64 `json:"outputs"`
	Status     string              `json:"status"`
	Pieces     []struct {
		Kind    string   `json:"kind"`
		SLo     *float64 `json:"s_lo"`
		SHi     *float64 `json:"s_hi"`
		FLo     *float64 `json:"f_lo"`
		FHi     *float64 `json:"f_hi"`
		SpeedLo *float64 `json:"speed_lo"`
		SpeedHi *float64 `json:"speed_hi"`
	} `json:"pieces"`
}

func val(p *float64) float64 {
	if p == nil {
		return math.NaN()
	}
	return *p
}

// same is bit-identity, with NaN equal to NaN (JSON null).
func same(a, b float64) bool { return a == b || math.IsNaN(a) && math.IsNaN(b) }

func solveJSONOf(t *testing.T, args ...string) solveOutput {
	t.Helper()
	f, out, errOut := testFactory()
	if code := execute(f, append([]string{"solve", "--json"}, args...)...); code != 0 {
		t.Fatalf("solve --json %q: exit %d, stderr %s", args, code, errOut)
	}
	var got solveOutput
	dec := json.NewDecoder(out)
	dec.DisallowUnknownFields()
	if err := dec.Decode(&got); err != nil {
		t.Fatalf("solve --json %q: output is not the JSON object: %v\n%s", args, err, out)
	}
	return got
}

// `solve --set mu1_cp=0.5 --json` must print exactly what the engine
// computes for that case: the JSON numbers round-trip float64 exactly.
func TestSolveJSONMatchesEngine(t *testing.T) {
	t.Parallel()
	got := solveJSONOf(t, "--set", "mu1_cp=0.5")

	p := engine.DefaultParams()
	p[engine.Mu1CP] = 0.5
	pvi := studies.DefaultPVI()
	var (
		s engine.Solver
		r engine.Result
	)
	s.SolveCase(&p, pvi, studies.DefaultCutLimit, &r)

	corey := (*engine.Model)(nil).Params()
	if len(got.Parameters) != len(corey) {
		t.Errorf("%d parameters, want %d", len(got.Parameters), len(corey))
	}
	for _, q := range corey {
		if v := got.Parameters[q.String()]; !same(val(v), p[q]) {
			t.Errorf("parameter %s = %v, want %v", q, val(v), p[q])
		}
	}
	outs := engine.Outputs(pvi)
	if len(got.Outputs) != len(outs) {
		t.Errorf("%d outputs, want %d", len(got.Outputs), len(outs))
	}
	for _, o := range outs {
		v, ok := got.Outputs[o.Name]
		if !ok {
			t.Errorf("output %s missing", o.Name)
			continue
		}
		if want := o.Get(&r); !same(val(v), want) {
			t.Errorf("output %s = %v, want %v", o.Name, val(v), want)
		}
	}
	if got.Status != r.StatusText() {
		t.Errorf("status %q, want %q", got.Status, r.StatusText())
	}
	sol, err := engine.Solve(p)
	if err != nil {
		t.Fatal(err)
	}
	want := sol.Pieces()
	if len(got.Pieces) != len(want) {
		t.Fatalf("%d pieces, want %d", len(got.Pieces), len(want))
	}
	for i, pc := range want {
		g := got.Pieces[i]
		if g.Kind != pieceKind(pc) || !same(val(g.SLo), pc.Lo) || !same(val(g.SHi), pc.Hi) ||
			!same(val(g.FLo), pc.FLo) || !same(val(g.FHi), pc.FHi) ||
			!same(val(g.SpeedLo), pc.SpeedLo) || !same(val(g.SpeedHi), pc.SpeedHi) {
			t.Errorf("piece %d = %+v, want %+v", i, g, pc)
		}
	}
}

// The default case has a closed form (derived here; Buckley & Leverett
// 1942 with Welge's 1952 tangent). With quadratic Corey curves, no
// residual saturations, equal viscosities and no dip,
//
//	f(S) = S²/D,  D = S² + (1−S)² = 2S² − 2S + 1,  f'(S) = 2S(1−S)/D².
//
// The tangent from (0, 0), f(S)/S = f'(S), gives S/D = 2S(1−S)/D², so
// D = 2(1−S), 2S² = 1: the front saturation is 1/√2. The front speed is
// f/S = S/D = (1/√2)/(2 − √2) = (1 + √2)/2, breakthrough at
// 2/(1 + √2) = 2(√2 − 1) PVI, and recovery at breakthrough equals the
// breakthrough PVI (only phase 1 is injected and none is produced).
func TestSolveDefaultClosedForm(t *testing.T) {
	t.Parallel()
	got := solveJSONOf(t)
	tests := []struct {
		name string
		want float64
	}{
		{engine.ColFrontSaturation, 1 / math.Sqrt2},
		{engine.ColFrontSpeed, (1 + math.Sqrt2) / 2},
		{engine.ColBreakthroughPVI, 2 * (math.Sqrt2 - 1)},
		{engine.ColRecoveryAtBreakthrough, 2 * (math.Sqrt2 - 1)},
		{engine.ColGravityNumber, 0},
		{engine.ColMaxRecovery, 1},
	}
	for _, tc := range tests {
		if v := val(got.Outputs[tc.name]); math.Abs(v-tc.want) > 1e-12 {
			t.Errorf("%s = %.15g, want %.15g", tc.name, v, tc.want)
		}
	}
	if got.Status != "ok" {
		t.Errorf("status %q, want ok", got.Status)
	}
}

func TestSolveTable(t *testing.T) {
	t.Parallel()
	f, out, errOut := testFactory()
	if code := execute(f, "solve", "--set", "mu2_cp=4", "--pvi", "0.5,2"); code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	text := out.String()
	var names []string
	for _, q := range (*engine.Model)(nil).Params() {
		names = append(names, q.String())
	}
	for _, o := range engine.Outputs([]float64{0.5, 2}) {
		names = append(names, o.Name)
	}
	for _, n := range append(names, "status: ok", "shock", "mPa·s") {
		if !strings.Contains(text, n) {
			t.Errorf("table lacks %q:\n%s", n, text)
		}
	}
}

func TestSolveBadInput(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name   string
		args   []string
		stderr string
	}{
		{"unknown name", []string{"--set", "nope=1"}, `unknown parameter "nope"`},
		{"not a number", []string{"--set", "n1=two"}, `"two" is not a number`},
		{"no equals", []string{"--set", "n1"}, "want NAME=VALUE"},
		{"twice", []string{"--set", "n1=2", "--set", "n1=3"}, "n1 is set twice"},
		// The DESIGN §2 rule s1r + s2r < 1, reported by the engine.
		{"invalid combination", []string{"--set", "s1r=0.6", "--set", "s2r=0.5"}, "s1r + s2r < 1"},
		{"not finite", []string{"--set", "mu1_cp=NaN"}, "a finite value"},
		{"pvi not increasing", []string{"--pvi", "1,0.5"}, "must increase"},
		{"pvi not positive", []string{"--pvi", "0"}, "not a positive"},
		{"cut limit above one", []string{"--cut-limit", "1.5"}, "not in (0, 1]"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			f, out, errOut := testFactory()
			code := execute(f, append([]string{"solve"}, tc.args...)...)
			if code != 2 {
				t.Errorf("solve %q: exit %d, want 2", tc.args, code)
			}
			if !strings.Contains(errOut.String(), tc.stderr) || !strings.HasPrefix(errOut.String(), "sweepstat: ") {
				t.Errorf("solve %q: stderr %q, want sweepstat: …%s…", tc.args, errOut, tc.stderr)
			}
			if out.Len() != 0 {
				t.Errorf("solve %q: wrote to stdout: %q", tc.args, out)
			}
		})
	}
}

func TestSolveParams(t *testing.T) {
	t.Parallel()
	p, err := SolveParams([]string{"mu2_cp=5", " n1 = 3 "})
	want := engine.DefaultParams()
	want[engine.Mu2CP], want[engine.N1] = 5, 3
	if err != nil || p != want {
		t.Errorf("SolveParams = %v, %v; want %v", p, err, want)
	}
	_, err = SolveParams([]string{"nope=1"})
	var ie *InputError
	if !errors.As(err, &ie) {
		t.Errorf("unknown name: error %v, want *InputError", err)
	}
}

// solve --help lists every parameter with its default and unit.
func TestSolveHelpListsParameters(t *testing.T) {
	t.Parallel()
	f, out, _ := testFactory()
	if code := execute(f, "solve", "--help"); code != 0 {
		t.Fatalf("exit %d", code)
	}
	def := engine.DefaultParams()
	lines := strings.Split(out.String(), "\n")
	for q := engine.Param(0); q < engine.LengthM; q++ {
		found := false
		for _, l := range lines {
			fs := strings.Fields(l)
			if len(fs) == 3 && fs[0] == q.String() && fs[1] == num(def[q]) && fs[2] == q.Unit() {
				found = true
			}
		}
		if !found {
			t.Errorf("solve --help has no line %q %q %q", q, num(def[q]), q.Unit())
		}
	}
}
