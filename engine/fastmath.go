package engine

import "math"

// The relative-permeability curves need x^n for 0 < x < 1 millions of
// times a second. exp and log here are table-driven and written in plain
// Go with every product rounded by an explicit conversion, so that the
// compiler cannot fuse multiply-adds: the same bits come out on every
// CPU, unlike math.Exp, whose amd64 assembly takes an FMA path only on
// processors that have one. Accuracy is within a few ulps (checked against
// math.Exp and math.Log in fastmath_test.go).

const (
	expTableBits = 6
	expTableSize = 1 << expTableBits // 2^(j/64), j = 0…63
	logTableBits = 8
	logTableSize = 1 << logTableBits // centres 1 + (i + ½)/256 of [1, 2)
)

// The tables (exp2Table, invTable, logcTable) are literals in
// fastmath_tables.go, written by TestFastMathTables -update-tables from the
// math package's own functions (to half an ulp), so every build and every
// CPU uses the same bits.

// ln 2/64 split into a part with trailing zero bits and the rest, so that
// k·ln2Hi is exact for the k that occur (Cody & Waite 1980 reduction).
const (
	ln2            = 0.693147180559945309417232121458176568
	ln2Hi          = 6.93147180369123816490e-01 // high bits of ln 2 (FreeBSD's constant)
	ln2Lo          = 1.90821492927058770002e-10 // ln 2 − ln2Hi
	invLn2x64      = expTableSize / ln2
	expUnderflow   = -745.2
	expOverflow    = 709.7
	fastLogMinNorm = 0x1p-1022
)

// fastExp returns e^x. Reduction: x = k·ln2/64 + r with |r| ≤ ln2/128,
// e^x = 2^(k/64)·e^r, e^r by its Taylor polynomial to r^5 (truncation below
// r^6/720 < 4e-17).
func fastExp(x float64) float64 {
	switch {
	case x != x:
		return x
	case x < expUnderflow:
		return 0
	case x > expOverflow:
		return math.Inf(1)
	}
	// Round x·64/ln2 to an integer by adding 1.5·2^52, which leaves the
	// integer in the low mantissa bits (round to nearest even).
	const shifter = 0x1.8p52
	z := float64(x*invLn2x64) + shifter
	kf := z - shifter
	k := int(int32(uint32(math.Float64bits(z))))
	hi := x - float64(kf*(ln2Hi/expTableSize))
	r := hi - float64(kf*(ln2Lo/expTableSize))
	// e^r − 1 − r by Horner, each product rounded on its own.
	p := float64(r * (1.0 / 120))
	p = float64(r * (p + 1.0/24))
	p = float64(r * (p + 1.0/6))
	p = float64(r * (p + 0.5))
	p = float64(r * p)
	er := 1 + (r + p)
	j := k & (expTableSize - 1)
	e := k >> expTableBits
	v := float64(exp2Table[j] * er)
	if e >= -1021 {
		// A normal result: multiply by 2^e built from its bits.
		return float64(v * math.Float64frombits(uint64(e+1023)<<52))
	}
	return math.Ldexp(v, e)
}

// fastLog returns ln x for x > 0 (NaN for x < 0, −Inf at 0). Reduction:
// x = m·2^e with m in [1, 2), m = c·(1 + r) with c the nearest table centre,
// |r| < 1/512, ln(1 + r) by its series to r^5 (truncation below
// r^6/6 < 1e-17).
func fastLog(x float64) float64 {
	switch {
	case x != x || x < 0:
		return math.NaN()
	case x == 0:
		return math.Inf(-1)
	case math.IsInf(x, 1):
		return x
	}
	e := 0
	if x < fastLogMinNorm {
		x *= 0x1p52
		e = -52
	}
	bits := math.Float64bits(x)
	e += int(bits>>52) - 1023
	m := math.Float64frombits(bits&(1<<52-1) | 1023<<52) // in [1, 2)
	i := int((bits >> (52 - logTableBits)) & (logTableSize - 1))
	r := float64(m*invTable[i]) - 1
	// ln(1 + r) − r by Horner.
	p := float64(r * (1.0 / 5))
	p = float64(r * (p - 1.0/4))
	p = float64(r * (p + 1.0/3))
	p = float64(r * (p - 0.5))
	p = float64(r * p)
	ef := float64(e)
	return float64(ef*ln2Hi) + (logcTable[i] + (r + (p + float64(ef*ln2Lo))))
}
