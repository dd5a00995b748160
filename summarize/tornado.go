package summarize

import (
	"cmp"
	"math"
	"slices"

	"github.com/sweepstat/sweepstat/engine"
)

// TornadoRow is one bar of a tornado chart: one output, one uncertain
// parameter moved alone (the columns of tornado.arrow, DESIGN §6).
type TornadoRow struct {
	Output    string // output column name, engine.Outputs order
	Parameter string // the leader moved (its same_as followers move with it)

	InputLow, InputBase, InputHigh float64 // the parameter's low quantile, median and high quantile

	OutputBase   float64 // output of the base case; NaN if the base case is rejected
	OutputAtLow  float64 // output with the parameter at InputLow, all others at base
	OutputAtHigh float64 // output with the parameter at InputHigh, all others at base

	// Swing is |OutputAtHigh − OutputAtLow|; NaN when either is NaN (a
	// rejected case, or an output undefined for that case) or both are the
	// same infinity.
	Swing float64
	// Rank is 1 for the largest swing of the output, then 2, 3, …; NaN
	// swings come last, and equal swings keep the order of the leaders.
	Rank int
}

// Tornado moves each leader of in alone (with its followers) to its low and
// its high quantile, every other parameter staying at in.Base, solves each
// case with the engine at the PVI checkpoints pvi and the cut limit
// cutLimit, and returns one [TornadoRow] per output column of
// in.Model.Outputs(pvi) and leader (DESIGN §6). Fixed parameters and
// followers get no row of their own.
//
// Rows are ordered by output, in engine.Outputs order, then by Rank: the
// largest swing first, NaN swings last, ties in leader order. OutputBase is
// the same in all rows of an output, and NaN for every output when the
// base case itself is rejected (see [Inputs.BaseResult] for why); swings
// are computed all the same. A rejected low or high case gives NaN outputs
// at that end and a NaN swing, ranked last.
//
// Tornado solves 1 + 2·len(in.Leaders) cases on the calling goroutine. It
// panics if low or high is outside (0, 1) or a leader has no Quantile.
func Tornado(in *Inputs, pvi []float64, cutLimit, low, high float64) []TornadoRow {
	if !(low > 0 && low < 1) || !(high > 0 && high < 1) {
		panic("summarize: tornado quantile outside (0, 1)")
	}
	outs := in.Model.Outputs(pvi)
	nl := len(in.Leaders)

	s := engine.Solver{Model: in.Model}
	var r engine.Result
	solve := func(p engine.Params, dst []float64) {
		s.SolveCase(&p, pvi, cutLimit, &r)
		for k, o := range outs {
			dst[k] = o.Get(&r)
		}
	}
	base := make([]float64, len(outs))
	solve(in.Base, base)

	// at[k] holds leader k's three inputs and the outputs at its two ends.
	type ends struct {
		lo, mid, hi float64
		outLo       []float64
		outHi       []float64
	}
	at := make([]ends, nl)
	for k := range in.Leaders {
		l := &in.Leaders[k]
		if l.Quantile == nil {
			panic("summarize: leader " + l.Name() + " has no Quantile")
		}
		e := ends{lo: l.Quantile(low), mid: in.Base[l.Param], hi: l.Quantile(high),
			outLo: make([]float64, len(outs)), outHi: make([]float64, len(outs))}
		p := in.Base
		in.set(&p, k, e.lo)
		solve(p, e.outLo)
		p = in.Base
		in.set(&p, k, e.hi)
		solve(p, e.outHi)
		at[k] = e
	}

	rows := make([]TornadoRow, 0, len(outs)*nl)
	for j, o := range outs {
		start := len(rows)
		for k := range in.Leaders {
			e := &at[k]
			rows = append(rows, TornadoRow{
				Output: o.Name, Parameter: in.Leaders[k].Name(),
				InputLow: e.lo, InputBase: e.mid, InputHigh: e.hi,
				OutputBase: base[j], OutputAtLow: e.outLo[j], OutputAtHigh: e.outHi[j],
				Swing: math.Abs(e.outHi[j] - e.outLo[j]),
			})
		}
		rankSwings(rows[start:])
	}
	return rows
}

// rankSwings sorts rows by decreasing swing, NaN last, keeping the given
// order among equal swings, and numbers them from 1.
func rankSwings(rows []TornadoRow) {
	slices.SortStableFunc(rows, func(a, b TornadoRow) int {
		an, bn := math.IsNaN(a.Swing), math.IsNaN(b.Swing)
		switch {
		case an && bn:
			return 0
		case an:
			return 1
		case bn:
			return -1
		}
		return cmp.Compare(b.Swing, a.Swing)
	})
	for i := range rows {
		rows[i].Rank = i + 1
	}
}
