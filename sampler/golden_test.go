package sampler

import (
	"encoding/json"
	"flag"
	"os"
	"path/filepath"
	"strconv"
	"testing"
)

var update = flag.Bool("update", false, "rewrite testdata/golden.json")

// TestGolden freezes the streams (STYLE §7): the first draws of fixed
// designs of uniform(0, 1) parameters, whose values are the uniforms
// themselves, written as exact hexadecimal floats. A change here changes
// every study's results; never regenerate the file to make the test pass
// without saying why. Regenerate with go test -run TestGolden -update.
func TestGolden(t *testing.T) {
	t.Parallel()
	specs := []Spec{uni("a", 0, 1), uni("b", 0, 1), uni("c", 0, 1)}
	corr := []Correlation{{"a", "b", 0.5}, {"b", "c", -0.3}}
	type sample struct {
		Method string
		Seed   uint64
		N      int
		Corr   bool
		Stream uint64
		Start  int
		Values [][]string // per parameter
	}
	var got []sample
	for _, c := range []sample{
		{Method: "lhs", Seed: 7, N: 1000},
		{Method: "lhs", Seed: 7, N: 1000, Stream: 1},
		{Method: "lhs", Seed: 8, N: 1 << 20, Start: 123456},
		{Method: "random", Seed: 7, N: 1000},
		{Method: "lhs", Seed: 7, N: 3*BlockSize + 11, Corr: true, Start: 2*BlockSize + 5},
		{Method: "random", Seed: 7, N: 20000, Corr: true},
	} {
		m, _ := ParseMethod(c.Method)
		var cr []Correlation
		if c.Corr {
			cr = corr
		}
		d := mustNew(t, specs, m, c.Seed, c.N, cr, BlockSize).Stream(c.Stream)
		cols := newCols(len(specs), 5)
		d.Fill(c.Start, 5, cols)
		c.Values = make([][]string, len(specs))
		for j := range cols {
			for _, x := range cols[j] {
				c.Values[j] = append(c.Values[j], strconv.FormatFloat(x, 'x', -1, 64))
			}
		}
		got = append(got, c)
	}
	path := filepath.Join("testdata", "golden.json")
	if *update {
		b, err := json.MarshalIndent(got, "", "  ")
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, append(b, '\n'), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var want []sample
	if err := json.Unmarshal(b, &want); err != nil {
		t.Fatal(err)
	}
	if len(want) != len(got) {
		t.Fatalf("golden file has %d samples, test makes %d", len(want), len(got))
	}
	for k := range got {
		for j := range got[k].Values {
			for i := range got[k].Values[j] {
				if g, w := got[k].Values[j][i], want[k].Values[j][i]; g != w {
					t.Errorf("sample %d (%s seed %d N %d corr %v stream %d) parameter %d case %d: %s, want %s",
						k, got[k].Method, got[k].Seed, got[k].N, got[k].Corr, got[k].Stream, j, got[k].Start+i, g, w)
				}
			}
		}
	}
}
