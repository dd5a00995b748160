package engine

import (
	"math"
	"math/rand/v2"
	"testing"
)

// ulps returns the distance between a and b in units in the last place of
// b.
func ulps(a, b float64) float64 {
	if a == b {
		return 0
	}
	return math.Abs(a-b) / (math.Nextafter(math.Abs(b), math.Inf(1)) - math.Abs(b))
}

// TestFastExpLog checks the table-driven exp and log against the math
// package (an independent implementation, FreeBSD msun lineage) over the
// arguments the curves produce: logs of (0, 1) and exponents down to the
// underflow threshold. Both must agree within 2 ulps.
func TestFastExpLog(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(5, 5))
	worstExp, worstLog := 0.0, 0.0
	for range 200000 {
		// Saturations spread over many decades, as near the residuals.
		x := math.Pow(10, -30*rng.Float64())
		if rng.IntN(2) == 0 {
			x = 1 - x
		}
		if x <= 0 || x >= 1 {
			continue
		}
		// Absolute error in units of 2^-52·max(|ln x|, 1): what x^n = e^(n ln x) needs.
		worstLog = math.Max(worstLog, math.Abs(fastLog(x)-math.Log(x))/math.Max(math.Abs(math.Log(x)), 1)/0x1p-52)
		y := -700 * rng.Float64() * rng.Float64()
		worstExp = math.Max(worstExp, ulps(fastExp(y), math.Exp(y)))
	}
	t.Logf("worst: exp %.2f ulp, log %.2f units of 2^-52·max(|ln x|, 1)", worstExp, worstLog)
	if worstExp > 2 || worstLog > 2 {
		t.Errorf("exp %.2f ulp, log %.2f ulp; want ≤ 2", worstExp, worstLog)
	}
	for _, tc := range []struct{ got, want float64 }{
		{fastExp(0), 1}, {fastExp(-800), 0}, {fastLog(0.5), -math.Ln2},
		{fastExp(math.Inf(-1)), 0}, {fastLog(0x1p-1070), -1070 * math.Ln2}, {fastExp(-1070 * math.Ln2), 0x1p-1070},
	} {
		if ulps(tc.got, tc.want) > 1 {
			t.Errorf("got %v, want %v", tc.got, tc.want)
		}
	}
}

func BenchmarkFastExp(b *testing.B) {
	x, s := -0.3, 0.0
	for b.Loop() {
		s += fastExp(x)
		x -= 1e-9
	}
	_ = s
}

func BenchmarkFastLog(b *testing.B) {
	x, s := 0.3, 0.0
	for b.Loop() {
		s += fastLog(x)
		x += 1e-9
	}
	_ = s
}

func BenchmarkMathLog(b *testing.B) {
	x, s := 0.3, 0.0
	for b.Loop() {
		s += math.Log(x)
		x += 1e-9
	}
	_ = s
}

func BenchmarkMathExp(b *testing.B) {
	x, s := -0.3, 0.0
	for b.Loop() {
		s += math.Exp(x)
		x -= 1e-9
	}
	_ = s
}
