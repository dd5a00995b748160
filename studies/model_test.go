package studies

import (
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/sweepstat/sweepstat/engine"
)

// letStudy is baseStudy with LET curves in place of the Corey exponents.
var letStudy = strings.Replace(strings.Replace(baseStudy,
	"  n1: {dist: uniform, min: 1.5, max: 4}\n  n2: {dist: uniform, min: 1.5, max: 3.5}\n",
	"  let_l1: {dist: uniform, min: 1.5, max: 3}\n  let_e1: 1\n  let_t1: 1.2\n  let_l2: 2\n  let_e2: {dist: uniform, min: 0.5, max: 4}\n  let_t2: 1.5\n", 1),
	"  - [n1, n2, 0.4]\n", "  - [let_l1, let_e2, 0.4]\n", 1) + "relperm: {model: let}\n"

// volumeLines is a volumes section for baseStudy.
const volumeLines = `volumes:
  length_m: 600
  width_m: 400
  thickness_m: {dist: uniform, min: 20, max: 30}
  porosity: {dist: triangular, min: 0.18, mode: 0.22, max: 0.26}
  b2: 1.2
  rate_m3_per_day: 900
  field_units: true
`

func TestParseLET(t *testing.T) {
	t.Parallel()
	s := mustParse(t, letStudy)
	m := s.Model()
	if m.Family != engine.FamilyLET || m.Volumes != nil {
		t.Fatalf("model %+v", m)
	}
	want := []engine.Param{engine.S1Init, engine.S1r, engine.S2r, engine.Kr1Max, engine.Kr2Max, engine.Mu1CP, engine.Mu2CP,
		engine.DipDeg, engine.Rho1, engine.Rho2, engine.PermMD, engine.VelocityMPerDay,
		engine.LetL1, engine.LetE1, engine.LetT1, engine.LetL2, engine.LetE2, engine.LetT2}
	slices.Sort(want)
	if got := m.Params(); !slices.Equal(got, want) {
		t.Errorf("columns %v, want %v", got, want)
	}
	if u := s.Uncertain(); !slices.Contains(u, engine.LetL1) || !slices.Contains(u, engine.LetE2) || slices.Contains(u, engine.N1) {
		t.Errorf("uncertain %v", u)
	}
}

func TestParseVolumes(t *testing.T) {
	t.Parallel()
	s := mustParse(t, baseStudy+volumeLines)
	v := s.Model().Volumes
	if v == nil || !v.AreaFromWidth || !v.FieldUnits || !v.VelocityFromRate || v.Schedule != nil {
		t.Fatalf("volumes %+v", v)
	}
	if !s.Volumes.Given || !s.Volumes.FieldUnits {
		t.Errorf("settings %+v", s.Volumes)
	}
	ps := s.Model().Params()
	for _, q := range []engine.Param{engine.LengthM, engine.AreaM2, engine.WidthM, engine.ThicknessM, engine.Porosity, engine.B2, engine.RateM3PerDay} {
		if !slices.Contains(ps, q) {
			t.Errorf("%v is not a column", q)
		}
	}
	if th, ok := s.Lookup(engine.ThicknessM); !ok || th.Pos.Line != 19 {
		t.Errorf("thickness_m entry %+v", th)
	}

	sched := strings.Replace(baseStudy+volumeLines, "  rate_m3_per_day: 900\n", "  rate_schedule: [[0, 400], [90, 900]]\n", 1)
	sched = strings.Replace(sched, "  width_m: 400\n  thickness_m: {dist: uniform, min: 20, max: 30}\n", "  area_m2: 10000\n", 1)
	s = mustParse(t, sched)
	v = s.Model().Volumes
	if v.AreaFromWidth || v.VelocityFromRate || !slices.Equal(v.Schedule, []engine.RateStep{{FromDay: 0, M3PerDay: 400}, {FromDay: 90, M3PerDay: 900}}) {
		t.Errorf("scheduled volumes %+v", v)
	}
	if slices.Contains(s.Model().Params(), engine.RateM3PerDay) {
		t.Errorf("rate_m3_per_day is a column with a schedule")
	}
}

// TestVolumesVelocityFromRate: a dipping study with a volumes section and
// a constant rate needs no velocity_m_per_day.
func TestVolumesVelocityFromRate(t *testing.T) {
	t.Parallel()
	src := rep(withDip(), "  velocity_m_per_day: 0.3\n", "")
	if _, err := Parse("x.yaml", []byte(src)); err == nil {
		t.Fatalf("dip without velocity accepted")
	}
	s := mustParse(t, src+volumeLines)
	if !s.Model().Volumes.VelocityFromRate {
		t.Errorf("velocity not taken from the rate")
	}
}

// modelBadCases are bad studies about the relperm and volumes sections.
var modelBadCases = []badCase{
	{"unknown relperm model", baseStudy + "relperm: {model: §lte}\n", ErrValue, "relperm.model", "did you mean let?", false},
	{"unknown relperm key", baseStudy + "relperm: {model: corey, §tabel: x.csv}\n", ErrUnknownKey, "relperm.tabel", "did you mean table?", false},
	{"table without table model", baseStudy + "relperm: {model: let, §table: x.csv}\n", ErrUnknownKey, "relperm.table", "only with model: table", false},
	{"table model without file", baseStudy + "relperm: §{model: table}\n", ErrMissing, "relperm.table", "needs table: FILE.csv", false},
	{"table file missing", baseStudy + "relperm: {model: table, table: §no-such-file.csv}\n", ErrValue, "relperm.table", "cannot read no-such-file.csv", false},
	{"Corey exponent in a LET study", strings.Replace(letStudy, "  let_t2: 1.5\n", "  let_t2: 1.5\n  §n1: 2\n", 1), ErrUnknownKey, "parameters.n1", "n1 is a Corey exponent; this study's relperm model is let", false},
	{"LET parameter in a Corey study", edit("  mu1_cp:", "  mu1_cp: 0.5\n  §let_l1: 2"), ErrUnknownKey, "parameters.let_l1", "LET parameter; this study's relperm model is corey", false},
	{"rock_sample in a Corey study", edit("  mu1_cp:", "  mu1_cp: 0.5\n  §rock_sample: 2"), ErrUnknownKey, "parameters.rock_sample", "measured table", false},
	{"LET parameter missing", strings.Replace(strings.Replace(letStudy, "parameters:", "§parameters:", 1), "  let_t1: 1.2\n", "", 1), ErrMissing, "parameters.let_t1", "required parameter let_t1 is missing", true},
	{"LET parameter not positive", strings.Replace(letStudy, "  let_e1: 1\n", "  let_e1: §0\n", 1), ErrValue, "parameters.let_e1", "let_e1 > 0", false},
	{"LET range never positive", strings.Replace(letStudy, "  let_t1: 1.2\n", "  let_t1: §{dist: uniform, min: -2, max: 0}\n", 1), ErrValue, "parameters.let_t1", "let_t1 > 0", false},
	{"dimension in parameters", edit("  mu1_cp:", "  mu1_cp: 0.5\n  §porosity: 0.2"), ErrUnknownKey, "parameters.porosity", "belongs in the volumes section", false},
	{"physics parameter in volumes", baseStudy + strings.Replace(volumeLines, "  b2: 1.2\n", "  b2: 1.2\n  §mu1_cp: 0.4\n", 1), ErrUnknownKey, "volumes.mu1_cp", "belongs in the parameters section", false},
	{"unknown volumes key", baseStudy + strings.Replace(volumeLines, "  b2: 1.2\n", "  b2: 1.2\n  §lenght_m: 3\n", 1), ErrUnknownKey, "volumes.lenght_m", "did you mean length_m?", false},
	{"length missing", baseStudy + "§" + strings.Replace(volumeLines, "  length_m: 600\n", "", 1), ErrMissing, "volumes.length_m", "length_m is required", true},
	{"area and width", baseStudy + strings.Replace(volumeLines, "  width_m: 400\n", "  area_m2: 5000\n  §width_m: 400\n", 1), ErrUnknownKey, "volumes.width_m", "not both", false},
	{"width without thickness", baseStudy + "§" + strings.Replace(volumeLines, "  thickness_m: {dist: uniform, min: 20, max: 30}\n", "", 1), ErrMissing, "volumes.thickness_m", "thickness_m is required with width_m", true},
	{"no cross-section", baseStudy + "§" + strings.Replace(volumeLines, "  width_m: 400\n  thickness_m: {dist: uniform, min: 20, max: 30}\n", "", 1), ErrMissing, "volumes.area_m2", "cross-section is required", true},
	{"no rate", baseStudy + "§" + strings.Replace(volumeLines, "  rate_m3_per_day: 900\n", "", 1), ErrMissing, "volumes.rate_m3_per_day", "injection rate is required", true},
	{"rate and schedule", baseStudy + strings.Replace(volumeLines, "  rate_m3_per_day: 900\n", "  §rate_m3_per_day: 900\n  rate_schedule: [[0, 100]]\n", 1), ErrUnknownKey, "volumes.rate_m3_per_day", "not both", false},
	{"schedule not from day 0", baseStudy + strings.Replace(volumeLines, "  rate_m3_per_day: 900\n", "  rate_schedule: [[§5, 100]]\n", 1), ErrValue, "volumes.rate_schedule[0][0]", "starts at day 0", false},
	{"schedule days not increasing", baseStudy + strings.Replace(volumeLines, "  rate_m3_per_day: 900\n", "  rate_schedule: [[0, 100], [30, 200], [§30, 50]]\n", 1), ErrValue, "volumes.rate_schedule[2][0]", "days must increase", false},
	{"schedule ends shut in", baseStudy + strings.Replace(volumeLines, "  rate_m3_per_day: 900\n", "  rate_schedule: [[0, 100], [30, §0]]\n", 1), ErrValue, "volumes.rate_schedule[1][1]", "last rate holds forever", false},
	{"schedule negative rate", baseStudy + strings.Replace(volumeLines, "  rate_m3_per_day: 900\n", "  rate_schedule: [[0, §-1], [30, 5]]\n", 1), ErrValue, "volumes.rate_schedule[0][1]", "rate must be ≥ 0", false},
	{"schedule step not a pair", baseStudy + strings.Replace(volumeLines, "  rate_m3_per_day: 900\n", "  rate_schedule: [§[0, 100, 3]]\n", 1), ErrType, "volumes.rate_schedule[0]", "want [from_day, m3_per_day]", false},
	{"field_units not a boolean", baseStudy + strings.Replace(volumeLines, "  field_units: true\n", "  field_units: §yes please\n", 1), ErrType, "volumes.field_units", "want true or false", false},
	{"porosity above one", baseStudy + strings.Replace(volumeLines, "  porosity: {dist: triangular, min: 0.18, mode: 0.22, max: 0.26}\n", "  porosity: §1.3\n", 1), ErrValue, "volumes.porosity", "0 < porosity ≤ 1", false},
	{"b2 zero", baseStudy + strings.Replace(volumeLines, "  b2: 1.2\n", "  b2: §0\n", 1), ErrValue, "volumes.b2", "b2 > 0", false},
}

func TestParseBadModel(t *testing.T) { runBadCases(t, modelBadCases) }

// tableCSV is an invented two-sample table; the second sample has its
// own end points (kr1 zero up to 0.15, kr2 zero from 0.7).
const tableCSV = `# invented measured curves of two rock samples
sample,s,kr1,kr2
core-a,0.10,0,0.95
core-a,0.30,0.02,0.50
core-a,0.50,0.10,0.18
core-a,0.70,0.30,0.02
core-a,0.80,0.45,0
core-b,0.05,0,1
core-b,0.15,0,0.80
core-b,0.40,0.08,0.30
core-b,0.55,0.20,0.08
core-b,0.70,0.38,0
`

// writeTable writes tableCSV and a study using it into a temporary
// folder and returns the study's path.
func writeTable(t *testing.T, study, table string) string {
	t.Helper()
	dir := t.TempDir()
	if err := os.MkdirAll(filepath.Join(dir, "scal"), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "scal", "curves.csv"), []byte(table), 0o644); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, "study.yaml")
	if err := os.WriteFile(path, []byte(study), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// tableStudy uses both samples of tableCSV with their own end points.
const tableStudy = `name: table-study
cases: 50
relperm: {model: table, table: scal/curves.csv}
parameters:
  s1_init: 0.1
  rock_sample: {dist: discrete, values: [1, 2]}
  mu1_cp: 0.5
  mu2_cp: 4
`

func TestParseTable(t *testing.T) {
	t.Parallel()
	path := writeTable(t, tableStudy, tableCSV)
	s, err := Load(path)
	if err != nil {
		t.Fatalf("Load: %s", listText(err))
	}
	m := s.Model()
	if m.Family != engine.FamilyTable || len(m.Tables) != 2 || m.TableEnds != [4]bool{true, true, true, true} {
		t.Fatalf("model %+v", m)
	}
	if m.Tables[0].Name() != "core-a" || m.Tables[1].Name() != "core-b" {
		t.Errorf("samples %q %q", m.Tables[0].Name(), m.Tables[1].Name())
	}
	// Sample 2's own end points: s1r = 0.15 (last zero of kr1), s2r =
	// 1 − 0.70, kr1_max = kr1(0.70) = 0.38, kr2_max = kr2(0.15) = 0.80.
	p := s.Case(make([]float64, engine.NumParams))
	p[engine.RockSample] = 2
	m.Resolve(&p)
	if got, want := [4]float64{p[engine.S1r], p[engine.S2r], p[engine.Kr1Max], p[engine.Kr2Max]}, [4]float64{0.15, 0.3, 0.38, 0.8}; math.Abs(got[0]-want[0]) > 1e-15 || math.Abs(got[1]-want[1]) > 1e-15 || got[2] != want[2] || got[3] != want[3] {
		t.Errorf("sample 2 end points %v, want %v", got, want)
	}
	if s.Hash == s.FileHash {
		t.Errorf("the study hash does not cover the table")
	}
	// The same study with another table has another hash.
	other := writeTable(t, tableStudy, strings.Replace(tableCSV, "core-b,0.70,0.38,0", "core-b,0.70,0.39,0", 1))
	s2, err := Load(other)
	if err != nil {
		t.Fatal(listText(err))
	}
	if s2.FileHash != s.FileHash || s2.Hash == s.Hash {
		t.Errorf("hashes: file %v, study %v", s2.FileHash == s.FileHash, s2.Hash == s.Hash)
	}
}

func TestParseTableErrors(t *testing.T) {
	t.Parallel()
	// A non-monotone kr1 is reported at its place in the CSV file.
	bad := strings.Replace(tableCSV, "core-a,0.50,0.10,0.18", "core-a,0.50,0.01,0.18", 1)
	path := writeTable(t, tableStudy, bad)
	_, err := Load(path)
	if err == nil {
		t.Fatalf("non-monotone table accepted")
	}
	csvPath := filepath.Join(filepath.Dir(path), "scal", "curves.csv")
	text := listText(err)
	if !strings.Contains(text, csvPath+":5:") || !strings.Contains(text, "relperm.table") {
		t.Errorf("error does not point into the table at line 5:\n%s", text)
	}
	// A rock_sample beyond the table.
	path = writeTable(t, strings.Replace(tableStudy, "values: [1, 2]", "values: [1, 3]", 1), tableCSV)
	_, err = Load(path)
	if err == nil || !strings.Contains(listText(err), "rock_sample 3 is not a sample of the table: it has samples 1 to 2") {
		t.Errorf("rock_sample 3 of 2: %s", listText(err))
	}
	// Two samples need rock_sample.
	path = writeTable(t, strings.Replace(tableStudy, "  rock_sample: {dist: discrete, values: [1, 2]}\n", "", 1), tableCSV)
	if _, err = Load(path); err == nil || !strings.Contains(listText(err), "required parameter rock_sample is missing") {
		t.Errorf("two samples without rock_sample: %s", listText(err))
	}
	// n1 does not belong to a table study.
	path = writeTable(t, tableStudy+"  n1: 2\n", tableCSV)
	if _, err = Load(path); err == nil || !strings.Contains(listText(err), "n1 is a Corey exponent; this study's relperm model is table") {
		t.Errorf("n1 in a table study: %s", listText(err))
	}
}

// TestParseTableNotAFile: a table path that is a folder or a device is
// refused with a message, not read (a device could be endless).
func TestParseTableNotAFile(t *testing.T) {
	t.Parallel()
	for _, name := range []string{"/dev/zero", "scal"} {
		path := writeTable(t, strings.Replace(tableStudy, "scal/curves.csv", name, 1), tableCSV)
		_, err := Load(path)
		if err == nil || !strings.Contains(listText(err), "cannot read "+name+": not a regular file") {
			t.Errorf("%s: %s", name, listText(err))
		}
	}
}
