package batch

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/studies"
)

// loadExample loads a shipped example study, cut to n cases and without
// Sobol indices.
func loadExample(t *testing.T, name string, n int) *studies.Study {
	t.Helper()
	st, err := studies.Load(filepath.Join("..", "studies", "examples", name))
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	st.Cases = n
	st.Sensitivity.Sobol = 0
	return st
}

// TestRunModels runs the LET and the tabulated example studies, both with
// a volumes section, and checks cases.arrow against the engine row by row
// (columns, units, values), the dimensional columns against their
// definitions, and that the report and the table copy are written.
func TestRunModels(t *testing.T) {
	t.Parallel()
	for _, name := range []string{"let-co2-storage.yaml", "core-table-waterflood.yaml"} {
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			const n = 3000
			st := loadExample(t, name, n)
			out := t.TempDir()
			runInto(t, st, out, 2)
			dir := filepath.Join(out, st.Name)
			cols, status := checkCases(t, st, dir, []int{0, 1, 2, 500, 1777, n - 1})

			// Dimensional columns against their definitions, every row.
			m := st.Model()
			for i := range n {
				if status[i] != "ok" {
					continue
				}
				pv := cols["length_m"][i] * cols["area_m2"][i] * cols["porosity"][i]
				if got := cols[engine.ColPoreVolume][i]; math.Abs(got-pv) > 1e-12*pv {
					t.Fatalf("row %d: pore volume %v, want %v", i, got, pv)
				}
				x := st.Report.PVI[0]
				want := cols[engine.CheckpointColumn("recovery", x)][i] * (1 - cols["s1_init"][i]) * pv / cols["b2"][i]
				if got := cols[engine.ProducedColumn(x, "m3")][i]; math.Abs(got-want) > 1e-12*math.Abs(want) {
					t.Fatalf("row %d: produced %v, want %v", i, got, want)
				}
				if m.Volumes.AreaFromWidth {
					if a := cols["width_m"][i] * cols["thickness_m"][i]; cols["area_m2"][i] != a {
						t.Fatalf("row %d: area %v, want width × thickness %v", i, cols["area_m2"][i], a)
					}
				}
				if m.Volumes.VelocityFromRate {
					if u := cols["rate_m3_per_day"][i] / cols["area_m2"][i]; cols["velocity_m_per_day"][i] != u {
						t.Fatalf("row %d: velocity %v, want rate/area %v", i, cols["velocity_m_per_day"][i], u)
					}
				}
			}
			if m.Family == engine.FamilyTable {
				// Each rock sample's end-point permeabilities are its own.
				for i := range n {
					k := int(cols["rock_sample"][i])
					_, _, k1, k2 := m.Tables[k-1].EndPoints()
					if cols["kr1_max"][i] != k1 || cols["kr2_max"][i] != k2 {
						t.Fatalf("row %d (sample %d): end points %v %v, want %v %v", i, k, cols["kr1_max"][i], cols["kr2_max"][i], k1, k2)
					}
				}
				copyOf, err := os.ReadFile(filepath.Join(dir, TableFile))
				if err != nil || string(copyOf) != string(st.Relperm.TableData) {
					t.Errorf("table copy: %v", err)
				}
			}
			// Units in the column metadata.
			schema, _, _ := readCases(t, filepath.Join(dir, CasesFile))
			for name, unit := range map[string]string{engine.ColBreakthroughDays: engine.UnitDay, engine.ColPoreVolume: engine.UnitReservoirM3, "porosity": "fraction"} {
				fs, ok := schema.FieldsByName(name)
				if !ok {
					t.Fatalf("no column %s", name)
				}
				if u, _ := fs[0].Metadata.GetValue("unit"); u != unit {
					t.Errorf("%s unit %q, want %q", name, u, unit)
				}
			}
			html, err := os.ReadFile(filepath.Join(dir, "report.html"))
			if err != nil {
				t.Fatal(err)
			}
			for _, want := range []string{"relative permeability", "breakthrough_days", "m³ at surface conditions", "screening"} {
				if !strings.Contains(string(html), want) {
					t.Errorf("report does not mention %q", want)
				}
			}
			// The report is rebuilt from the folder alone (the table copy
			// included), identically.
			if err := Report(t.Context(), dir, ReportOptions{Version: "test"}); err != nil {
				t.Fatalf("Report: %v", err)
			}
			again, _ := os.ReadFile(filepath.Join(dir, "report.html"))
			if string(again) != string(html) {
				t.Errorf("rebuilt report differs")
			}
		})
	}
}
