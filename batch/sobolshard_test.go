package batch

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestMergeRefusesMissingSobolRuns: with Sobol indices asked for, every
// shard solves its rows of the Sobol design; a shard whose Sobol file is
// missing or damaged makes merge fail naming it, and nothing is written.
// (TestMergeMatchesOneRun checks that merged Sobol indices equal one
// run's.)
func TestMergeRefusesMissingSobolRuns(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	st := writeStudyFile(t, filepath.Join(dir, "src"), 1200, 5, 8)
	for _, damage := range []string{"missing", "damaged"} {
		out := filepath.Join(dir, damage)
		runAllShards(t, st, out, 2, 500, nil)
		file := filepath.Join(out, st.Name, ShardsDir, Shard{K: 2, N: 2}.SobolFile())
		switch damage {
		case "missing":
			if err := os.Remove(file); err != nil {
				t.Fatal(err)
			}
		case "damaged":
			data, err := os.ReadFile(file)
			if err != nil {
				t.Fatal(err)
			}
			data[len(data)/2] ^= 0xff
			if err := os.WriteFile(file, data, 0o644); err != nil {
				t.Fatal(err)
			}
		}
		_, err := Merge(context.Background(), out, Options{Workers: 2})
		if err == nil || !strings.Contains(err.Error(), "Sobol") || !strings.Contains(err.Error(), "2/2") {
			t.Errorf("%s Sobol file: err = %v, want a problem with shard 2/2's Sobol runs", damage, err)
		}
		if _, err := os.Stat(filepath.Join(out, st.Name, CasesFile)); !os.IsNotExist(err) {
			t.Errorf("%s Sobol file: merge wrote cases.arrow anyway", damage)
		}
	}
}
