package studies

import (
	"errors"
	"strings"
	"testing"
)

// badCases are study texts with one marked error each: § stands just
// before the spot the error must point at (for YAML syntax errors, on the
// line it must name: the parser gives no column). The message must
// contain frag; path and cause must match exactly.
var badCases = []badCase{
	// File level.
	{"empty file", "§", ErrMissing, "", "empty study file", false},
	{"only comments", "§# nothing here\n# at all\n", ErrMissing, "", "empty study file", false},
	{"only document marker", "§---\n", ErrMissing, "", "empty study file", false},
	{"NUL byte", "name: a\ncases: 1§\x00\n", ErrSyntax, "", "binary data", false},
	{"invalid UTF-8", "name: a\ncases: 1\nseed: §\xff\xfe\n", ErrSyntax, "", "invalid UTF-8", false},
	{"unclosed flow mapping", edit("  s2r:", "§  s2r: {dist: uniform, min: 0.1\n  kr9: 1"), ErrSyntax, "", "YAML syntax error", true},
	{"bad indentation", edit("  kr2_max:", "§   kr2_max: 0.85\n  n0: 1"), ErrSyntax, "", "YAML syntax error", true},
	{"dedent inside a mapping", edit("  kr2_max:", "§ kr2_max: 0.85"), ErrSyntax, "", "did not find expected key", true},
	{"list item in a mapping", edit("  kr2_max:", "§  - 0.85"), ErrSyntax, "", "YAML syntax error", true},
	{"unknown alias", edit("  kr2_max:", "  kr2_max: §*top"), ErrSyntax, "", "unknown anchor 'top'", false},
	{"tab indentation", edit("  kr2_max:", "§\tkr2_max: 0.85"), ErrSyntax, "", "YAML syntax error", true},
	{"second document", baseStudy + "§---\nname: other\n", ErrSyntax, "", "one YAML document", false},
	{"top level is a list", "§- name: a\n- cases: 3\n", ErrType, "", "want a mapping of keys", false},
	{"top level is text", "§just some words\n", ErrType, "", "got the text", false},

	// Keys.
	{"duplicate top-level key", edit("seed:", "seed: 5\n§seed: 6"), ErrDuplicateKey, "seed", "first given at line 3", false},
	{"duplicate parameter", edit("  kr2_max:", "  kr2_max: 0.85\n  §kr2_max: 0.9"), ErrDuplicateKey, "parameters.kr2_max", "duplicate key kr2_max", false},
	{"duplicate distribution field", edit("  n1:", "  n1: {dist: uniform, min: 1.5, max: 4, §min: 2}"), ErrDuplicateKey, "parameters.n1.min", "duplicate key min", false},
	{"unknown top-level key", baseStudy + "§paramters: {}\n", ErrUnknownKey, "paramters", "did you mean parameters?", false},
	{"unknown parameter", edit("  mu2_cp:", "  mu2_cp: 3\n  §mu_2cp: 4"), ErrUnknownKey, "parameters.mu_2cp", "did you mean mu2_cp?", false},
	{"misspelt required parameter", edit("  mu2_cp:", "  §mu2cp: 3"), ErrUnknownKey, "parameters.mu2cp", "did you mean mu2_cp?", false},
	{"unknown parameter prefix", rep(withDip(), "  velocity_m_per_day: 0.3\n", "  velocity_m_per_day: 0.3\n  §velocity: 1\n"), ErrUnknownKey, "parameters.velocity", "did you mean velocity_m_per_day?", false},
	{"unknown distribution field", edit("  n1:", "  n1: {dist: uniform, §mn: 1.5, max: 4}"), ErrUnknownKey, "parameters.n1.mn", "did you mean min?", false},
	{"field of another distribution", edit("  n1:", "  n1: {dist: uniform, min: 1.5, max: 4, §mode: 2}"), ErrUnknownKey, "parameters.n1.mode", "mode is a field of triangular and pert", false},
	{"unknown report key", baseStudy + "report: {§cut: 0.9}\n", ErrUnknownKey, "report.cut", "did you mean cut_limit?", false},
	{"unknown tornado key", baseStudy + "tornado: {low: 0.1, §hi: 0.9}\n", ErrUnknownKey, "tornado.hi", "did you mean high?", false},
	{"unknown sensitivity key", baseStudy + "sensitivity: {§sobel: 100}\n", ErrUnknownKey, "sensitivity.sobel", "did you mean sobol?", false},
	{"unknown phases key", baseStudy + "phases: {§injector: water}\n", ErrUnknownKey, "phases.injector", "did you mean injected?", false},
	{"merge key", edit("  n1:", "  n1: &u {dist: uniform, min: 1.5, max: 4}\n  n2: {§<<: *u}"), ErrUnknownKey, `parameters.n2."<<"`, "merge keys", false},
	{"same_as with other keys", edit("  s1r:", "  s1r: {same_as: s1_init, §min: 0}"), ErrUnknownKey, "parameters.s1r.min", "same_as takes no other keys", false},
	{"same_as with dist", edit("  s1r:", "  s1r: {§dist: uniform, same_as: s1_init}"), ErrUnknownKey, "parameters.s1r.dist", "either dist or same_as", false},

	// Types.
	{"cases as text", edit("cases:", "cases: §many"), ErrType, "cases", `got the text "many"`, false},
	{"quoted number", edit("  kr2_max:", `  kr2_max: §"0.85"`), ErrType, "parameters.kr2_max", "drop the quotes", false},
	{"quoted number in a field", edit("  n1:", `  n1: {dist: uniform, min: §'1.5', max: 4}`), ErrType, "parameters.n1.min", "drop the quotes", false},
	{"parameters as a list", "name: x\ncases: 3\nparameters: §[s1_init, s1r]\n", ErrType, "parameters", "got a list", false},
	{"parameter as a list", edit("  kr2_max:", "  kr2_max: §[0.8, 0.9]"), ErrType, "parameters.kr2_max", "got a list", false},
	{"parameter as a distribution name", edit("  kr2_max:", "  kr2_max: §uniform"), ErrType, "parameters.kr2_max", "write {dist: uniform, …}", false},
	{"parameter as another's name", edit("  s1r:", "  s1r: §s1_init"), ErrType, "parameters.s1r", "write {same_as: s1_init}", false},
	{"parameter as boolean", edit("  kr2_max:", "  kr2_max: §true"), ErrType, "parameters.kr2_max", "the boolean true", false},
	{"pvi as a number", baseStudy + "report: {pvi: §1}\n", ErrType, "report.pvi", "want a list of checkpoints", false},
	{"discrete values as a mapping", edit("  n1:", "  n1: {dist: discrete, values: §{a: 1}}"), ErrType, "parameters.n1.values", "want a list of numbers", false},
	{"report as a list", baseStudy + "report: §[0.5, 1]\n", ErrType, "report", "want a mapping", false},
	{"correlations as a mapping", rep(baseStudy, "correlations:\n  - [n1, n2, 0.4]\n", "correlations: §{n1: n2}\n"), ErrType, "correlations", "want a list of [a, b, rho]", false},
	{"correlation entry not a list", edit("  - [n1, n2", "  - §n1 n2 0.4"), ErrType, "correlations[0]", "want [a, b, rho]", false},
	{"correlation entry too short", edit("  - [n1, n2", "  - §[n1, n2]"), ErrType, "correlations[0]", "has 2 items", false},
	{"correlation name a list", edit("  - [n1, n2", "  - [§[n1], n2, 0.4]"), ErrType, "correlations[0][0]", "want a parameter name", false},
	{"key that is a list", baseStudy + "§[a, b]: 1\n", ErrType, "", "a key must be a name", false},

	// Missing values.
	{"missing name", edit("name:", "§cases: 100"), ErrMissing, "name", "missing required key name", false},
	{"missing cases", "§" + edit("cases:", ""), ErrMissing, "cases", "missing required key cases", false},
	{"missing parameters", "§name: x\ncases: 3\n", ErrMissing, "parameters", "missing required key parameters", false},
	{"empty value", edit("cases:", "cases:§"), ErrMissing, "cases", "no value", false},
	{"parameter without value", edit("  kr2_max:", "  kr2_max:§"), ErrMissing, "parameters.kr2_max", "no value", false},
	{"missing required parameter", rep(edit("parameters:", "§parameters:"), "  kr2_max: 0.85\n", ""), ErrMissing, "parameters.kr2_max", "required parameter kr2_max is missing", false},
	{"missing distribution field", edit("  s2r:", "  s2r: §{dist: triangular, min: 0.15, max: 0.35}"), ErrMissing, "parameters.s2r.mode", "triangular needs mode", false},
	{"missing dist", edit("  n1:", "  n1: §{min: 1.5, max: 4}"), ErrMissing, "parameters.n1.dist", "needs dist:", false},
	{"missing sd", edit("  mu2_cp:", "  mu2_cp: §{dist: lognormal, mean: 3}"), ErrMissing, "parameters.mu2_cp.sd", "lognormal needs sd", false},
	{"dip needs rho1", rep(rep(withDip(), "  rho1: 1040\n", ""), "  dip_deg:", "  §dip_deg:"), ErrMissing, "parameters.rho1", "rho1 is required because dip_deg is uncertain", false},
	{"fixed dip needs perm", edit("  mu2_cp:", "  mu2_cp: 3\n  §dip_deg: 5\n  rho1: 1000\n  rho2: 800\n  velocity_m_per_day: 1"), ErrMissing, "parameters.perm_md", "because dip_deg is not 0", false},
	{"empty same_as", edit("  s1r:", `  s1r: {same_as: §""}`), ErrMissing, "parameters.s1r.same_as", "needs a parameter name", false},

	// Numbers and ranges.
	{"NaN", edit("  kr2_max:", "  kr2_max: §.nan"), ErrValue, "parameters.kr2_max", "finite", false},
	{"infinity in a field", edit("  n1:", "  n1: {dist: uniform, min: 1.5, max: §.inf}"), ErrValue, "parameters.n1.max", "finite", false},
	{"minus infinity in pvi", baseStudy + "report: {pvi: [0.5, §-.Inf]}\n", ErrValue, "report.pvi[1]", "finite", false},
	{"zero cases", edit("cases:", "cases: §0"), ErrValue, "cases", "must be from 1 to 2147483647", false},
	{"number beyond float64", edit("  kr2_max:", "  kr2_max: §1e400"), ErrValue, "parameters.kr2_max", "beyond the range", false},
	{"fractional cases", edit("cases:", "cases: §1.5"), ErrValue, "cases", "whole number", false},
	{"too many cases", edit("cases:", "cases: §3e9"), ErrValue, "cases", "must be from 1 to 2147483647", false},
	{"negative seed", edit("seed:", "seed: §-1"), ErrValue, "seed", "must not be negative", false},
	{"seed beyond 64 bits", edit("seed:", "seed: §18446744073709551616"), ErrValue, "seed", "from 0 to 18446744073709551615", false},
	{"fractional seed", edit("seed:", "seed: §2.5"), ErrValue, "seed", "whole number", false},
	{"unknown sampling", baseStudy + "sampling: §LHS\n", ErrValue, "sampling", "did you mean lhs?", false},
	{"uniform min above max", edit("  n1:", "  n1: {dist: uniform, min: 4, max: §1.5}"), ErrValue, "parameters.n1.max", "must be greater than min", false},
	{"triangular mode outside", edit("  s2r:", "  s2r: {dist: triangular, min: 0.15, mode: §0.5, max: 0.35}"), ErrValue, "parameters.s2r.mode", "must lie in [min, max]", false},
	{"normal sd not positive", edit("  mu1_cp:", "  mu1_cp: {dist: normal, mean: 0.5, sd: §0}"), ErrValue, "parameters.mu1_cp.sd", "must be positive", false},
	{"lognormal mean not positive", edit("  mu2_cp:", "  mu2_cp: {dist: lognormal, mean: §-3, sd: 1}"), ErrValue, "parameters.mu2_cp.mean", "must be positive", false},
	{"negative discrete weight", edit("  n1:", "  n1: {dist: discrete, values: [2, 3], weights: [1, §-1]}"), ErrValue, "parameters.n1.weights[1]", "must not be negative", false},
	{"discrete weights count", edit("  n1:", "  n1: {dist: discrete, values: [2, 3], weights: §[1, 2, 3]}"), ErrValue, "parameters.n1.weights", "has 3 entries for 2 values", false},
	{"discrete without values", edit("  n1:", "  n1: {dist: discrete, values: §[]}"), ErrValue, "parameters.n1.values", "at least one value", false},
	{"unknown distribution", edit("  n1:", "  n1: {dist: §triangle, min: 1, mode: 2, max: 3}"), ErrUnknownName, "parameters.n1.dist", "did you mean triangular?", false},
	{"dist fixed", edit("  n1:", "  n1: {dist: §fixed, value: 2}"), ErrUnknownName, "parameters.n1.dist", "plain number", false},

	// DESIGN §2 validity rules on fixed values and impossible ranges.
	{"end point above one", edit("  kr2_max:", "  kr2_max: §1.5"), ErrValue, "parameters.kr2_max", "kr2_max = 1.5 breaks 0 < kr2_max ≤ 1", false},
	{"end point zero", edit("  kr2_max:", "  kr2_max: §0"), ErrValue, "parameters.kr2_max", "breaks 0 < kr2_max ≤ 1", false},
	{"negative exponent", edit("  n1:", "  n1: §-1"), ErrValue, "parameters.n1", "n1 = -1 breaks n1 > 0", false},
	{"zero viscosity", edit("  mu1_cp:", "  mu1_cp: §0"), ErrValue, "parameters.mu1_cp", "breaks mu1_cp > 0", false},
	{"negative residual", edit("  s2r:", "  s2r: §-0.1"), ErrValue, "parameters.s2r", "breaks s2r ≥ 0", false},
	{"residuals sum to one", rep(rep(edit("  s1r:", "  s1r: 0.5"), "  s2r: {dist: triangular, min: 0.15, mode: 0.25, max: 0.35}", "  s2r: §0.5"), "  s1_init: 0.2", "  s1_init: 0.1"), ErrValue, "parameters.s2r", "break s1r + s2r < 1", false},
	{"initial saturation too high", rep(edit("  s1_init:", "  s1_init: §0.85"), "  s2r: {dist: triangular, min: 0.15, mode: 0.25, max: 0.35}", "  s2r: 0.2"), ErrValue, "parameters.s1_init", "s1_init < 1 − s2r", false},
	{"negative initial saturation", edit("  s1_init:", "  s1_init: §-0.05"), ErrValue, "parameters.s1_init", "breaks s1_init ≥ 0", false},
	{"saturation range outside [0,1)", edit("  s2r:", "  s2r: §{dist: uniform, min: 1.1, max: 1.3}"), ErrValue, "parameters.s2r", "s1r + s2r < 1 cannot hold in any case", false},
	{"exponent range not positive", edit("  n1:", "  n1: §{dist: uniform, min: -2, max: 0}"), ErrValue, "parameters.n1", "never satisfies n1 > 0", false},
	{"end point range above one", edit("  kr1_max:", "  kr1_max: §{dist: triangular, min: 1.01, mode: 1.1, max: 1.2}"), ErrValue, "parameters.kr1_max", "never satisfies 0 < kr1_max ≤ 1", false},
	{"discrete exponents all negative", edit("  n2:", "  n2: §{dist: discrete, values: [-2, -1]}"), ErrValue, "parameters.n2", "no discrete value of n2", false},
	{"truncated normal viscosity negative", edit("  mu1_cp:", "  mu1_cp: §{dist: normal, mean: -1, sd: 1, max: -0.5}"), ErrValue, "parameters.mu1_cp", "never satisfies mu1_cp > 0", false},
	{"dip beyond vertical", rep(withDip(), "  dip_deg: {dist: uniform, min: -8, max: 8}", "  dip_deg: §95"), ErrValue, "parameters.dip_deg", "breaks |dip_deg| ≤ 90", false},
	{"zero permeability while dipping", rep(withDip(), "  perm_md: {dist: lognormal, mean: 150, sd: 80}", "  perm_md: §0"), ErrValue, "parameters.perm_md", "perm_md > 0 when dipping", false},
	{"negative density", rep(withDip(), "  rho1: 1040", "  rho1: §-5"), ErrValue, "parameters.rho1", "breaks rho1 ≥ 0", false},

	// same_as.
	{"same_as unknown name", edit("  s1r:", "  s1r: {same_as: §s1_int}"), ErrUnknownName, "parameters.s1r.same_as", "did you mean s1_init?", false},
	{"same_as parameter not given", edit("  s1r:", "  s1r: {same_as: §dip_deg}"), ErrUnknownName, "parameters.s1r.same_as", "dip_deg is not given", false},
	{"same_as itself", edit("  s1r:", "  s1r: {same_as: §s1r}"), ErrCycle, "parameters.s1r.same_as", "s1r → s1r", false},
	{"same_as two-cycle", edit("  s1_init:", "  s1_init: {same_as: §s1r}"), ErrCycle, "parameters.s1_init.same_as", "same_as cycle: s1_init → s1r → s1_init", false},
	{"same_as three-cycle", rep(edit("  s1_init:", "  s1_init: {same_as: §s2r}"), "  s2r: {dist: triangular, min: 0.15, mode: 0.25, max: 0.35}", "  s2r: {same_as: s1r}"), ErrCycle, "parameters.s1_init.same_as", "same_as cycle: s1_init → s2r → s1r → s1_init", false},

	// Correlations.
	{"correlation unknown name", edit("  - [n1, n2", "  - [n1, §n3, 0.4]"), ErrUnknownName, "correlations[0][1]", "did you mean n1?", false},
	{"correlation with fixed", edit("  - [n1, n2", "  - [§kr2_max, n2, 0.4]"), ErrValue, "correlations[0][0]", "kr2_max is fixed", false},
	{"correlation with absent parameter", edit("  - [n1, n2", "  - [n1, §dip_deg, 0.4]"), ErrValue, "correlations[0][1]", "not in parameters", false},
	{"correlation with follower", edit("  - [n1, n2", "  - [§s1r, n2, 0.4]"), ErrValue, "correlations[0][0]", "correlate s1_init instead", false},
	{"correlation with itself", edit("  - [n1, n2", "  - [n1, §n1, 0.4]"), ErrValue, "correlations[0][1]", "n1 cannot be correlated with itself", false},
	{"correlation of one", edit("  - [n1, n2", "  - [n1, n2, §1]"), ErrValue, "correlations[0][2]", "strictly between -1 and 1", false},
	{"correlation pair twice", baseStudy + "  - §[n2, n1, 0.1]\n", ErrDuplicateKey, "correlations[1]", "already correlated at line 15", false},
	{"correlation rho as text", edit("  - [n1, n2", "  - [n1, n2, §high]"), ErrType, "correlations[0][2]", "want a number", false},

	// Report, tornado, sensitivity, name, phases.
	{"pvi not increasing", baseStudy + "report: {pvi: [1, §0.5]}\n", ErrValue, "report.pvi[1]", "strictly increasing", false},
	{"pvi repeated", baseStudy + "report: {pvi: [0.5, 1, §1]}\n", ErrValue, "report.pvi[2]", "strictly increasing", false},
	{"pvi zero", baseStudy + "report: {pvi: [§0, 1]}\n", ErrValue, "report.pvi[0]", "must be positive", false},
	{"pvi empty", baseStudy + "report: {pvi: §[]}\n", ErrValue, "report.pvi", "at least one checkpoint", false},
	{"cut limit above one", baseStudy + "report: {cut_limit: §1.5}\n", ErrValue, "report.cut_limit", "(0, 1]", false},
	{"cut limit zero", baseStudy + "report: {cut_limit: §0}\n", ErrValue, "report.cut_limit", "(0, 1]", false},
	{"unknown percentiles", baseStudy + "report: {percentiles: §P90}\n", ErrValue, "report.percentiles", "exceedance or cumulative", false},
	{"tornado low above high", baseStudy + "tornado: {low: 0.9, high: §0.1}\n", ErrValue, "tornado.high", "low must be below high", false},
	{"tornado quantile one", baseStudy + "tornado: {low: 0.1, high: §1}\n", ErrValue, "tornado.high", "in (0, 1)", false},
	{"negative sobol", baseStudy + "sensitivity: {sobol: §-4}\n", ErrValue, "sensitivity.sobol", "must be from 0 to", false},
	{"sobol of one", baseStudy + "sensitivity: {sobol: §1}\n", ErrValue, "sensitivity.sobol", "at least 2", false},
	{"sobol too large", baseStudy + "sensitivity: {sobol: §20000000}\n", ErrValue, "sensitivity.sobol", "must be from 0 to 10000000", false},
	{"name with a slash", edit("name:", "name: §runs/a"), ErrValue, "name", "character '/'", false},
	{"name starting with a dot", edit("name:", "name: §.hidden"), ErrValue, "name", "must not start with a dot", false},
	{"empty name", edit("name:", `name: §""`), ErrValue, "name", "must not be empty", false},
	{"name with a space", edit("name:", `name: §"two words"`), ErrValue, "name", "character ' '", false},
	{"empty phase label", baseStudy + "phases: {injected: §\"  \"}\n", ErrValue, "phases.injected", "must not be empty", false},
}

// badCase is one entry of a table of bad studies.
type badCase struct {
	name     string
	src      string
	cause    error
	path     string
	frag     string
	lineOnly bool
}

func TestParseBad(t *testing.T) { runBadCases(t, badCases) }

// runBadCases parses each case and requires its marked error.
func runBadCases(t *testing.T, cases []badCase) {
	t.Parallel()
	seen := map[string]bool{}
	for _, tc := range cases {
		if seen[tc.name] {
			t.Fatalf("duplicate case name %q", tc.name)
		}
		seen[tc.name] = true
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			src, pos := mark(t, tc.src)
			s, err := Parse("bad.yaml", []byte(src))
			if err == nil {
				t.Fatalf("Parse succeeded, want %v at %v\n%s", tc.cause, pos, src)
			}
			if s != nil {
				t.Errorf("Parse returned a study with an error")
			}
			if findError(err, pos, tc.lineOnly, tc.path, tc.cause, tc.frag) == nil {
				t.Errorf("no error at %v path %q cause %v containing %q; got\n%s\nsource:\n%s", pos, tc.path, tc.cause, tc.frag, listText(err), src)
			}
			// Every entry prints with the file name first.
			for _, e := range err.(ErrorList) {
				if !strings.HasPrefix(e.Error(), "bad.yaml:") {
					t.Errorf("entry %q does not start with the file name", e)
				}
				if e.Err == nil {
					t.Errorf("entry %q has no cause", e)
				}
			}
		})
	}
}

// TestParseBadCount keeps the table at its promised size.
func TestParseBadCount(t *testing.T) {
	t.Parallel()
	causes := map[error]int{}
	for _, tc := range badCases {
		causes[tc.cause]++
	}
	if len(badCases) < 30 {
		t.Errorf("%d bad cases, want at least 30", len(badCases))
	}
	for _, c := range []error{ErrSyntax, ErrUnknownKey, ErrDuplicateKey, ErrType, ErrMissing, ErrValue, ErrCycle, ErrUnknownName} {
		if causes[c] == 0 {
			t.Errorf("no bad case for %v", c)
		}
	}
}

// TestParseAllErrorsOnePass checks that independent problems all come
// back from one call, sorted by position.
func TestParseAllErrorsOnePass(t *testing.T) {
	t.Parallel()
	src := edit("cases:", "cases: 0")
	src = editIn(src, "  kr2_max:", "  kr2_max: 1.5")
	src = editIn(src, "  n1:", "  n1: {dist: uniform, mn: 1.5, max: 4}")
	src = editIn(src, "  - [n1, n2", "  - [n1, n2, 2]")
	src += "report: {pvi: [2, 1], percentiles: up}\ntornado: {low: 0.5, high: 0.5}\nextra: 1\n"
	_, err := Parse("many.yaml", []byte(src))
	list, ok := err.(ErrorList)
	if !ok {
		t.Fatalf("got %T (%v), want ErrorList", err, err)
	}
	want := []string{"cases", "parameters.kr2_max", "parameters.n1.mn", "correlations[0][2]", "report.pvi[1]", "report.percentiles", "tornado.high", "extra"}
	var got []string
	for _, e := range list {
		got = append(got, e.Path)
	}
	if strings.Join(got, " ") != strings.Join(want, " ") {
		t.Errorf("paths\n got %v\nwant %v\n%s", got, want, listText(err))
	}
	for i := 1; i < len(list); i++ {
		a, b := list[i-1], list[i]
		if a.Line > b.Line || a.Line == b.Line && a.Column > b.Column {
			t.Errorf("not sorted: %v before %v", a, b)
		}
	}
	if !errors.Is(err, ErrUnknownKey) || !errors.Is(err, ErrValue) {
		t.Errorf("errors.Is does not see the entries' causes")
	}
	var one *Error
	if !errors.As(err, &one) || one != list[0] {
		t.Errorf("errors.As does not find the first entry")
	}
}

// TestParseTooManyErrors: a file with thousands of problems lists the
// first MaxErrors, then one entry counting the rest.
func TestParseTooManyErrors(t *testing.T) {
	t.Parallel()
	src := "name: x\ncases: 1\nparameters:\n  n1: {dist: discrete, values: [" + strings.Repeat("x, ", 5000) + "1]}\n"
	_, err := Parse("many.yaml", []byte(src))
	list, ok := err.(ErrorList)
	if !ok || len(list) != MaxErrors+1 {
		t.Fatalf("got %d entries, want %d", len(list), MaxErrors+1)
	}
	last := list[MaxErrors]
	// 5000 bad values and 8 missing required parameters.
	if want := "too many errors: 4908 more not shown"; last.Msg != want {
		t.Errorf("last entry %q, want %q", last.Msg, want)
	}
	if last.Line < list[MaxErrors-1].Line || last.Line == list[MaxErrors-1].Line && last.Column < list[MaxErrors-1].Column {
		t.Errorf("last entry %v sorts before %v", last, list[MaxErrors-1])
	}
}
