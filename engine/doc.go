// Package engine solves one-dimensional immiscible displacement exactly:
// Buckley–Leverett theory with gravity and without capillary pressure, the
// entropy solution built from the upper concave envelope of the fractional
// flow, and Welge's average saturation.
//
// Conventions (DESIGN §2). Phase 1 is the injected (displacing) phase and
// phase 2 the resident one; S is the phase-1 saturation. Distance and time
// are dimensionless: xD = x/L and tD = pore volumes injected (PVI). The
// inlet carries phase 1 only, f(S_b) = 1. Units follow the parameter names
// (mu in mPa·s, perm in mD, velocity in m/day, densities in kg/m³, dip in
// degrees with positive meaning the flow goes up-dip).
//
// Relative permeabilities are Corey curves ([Corey], what [Solve] uses),
// or any [RelPerm]: the LET correlation ([LET]) and measured tables
// ([Table] from [NewTable] or [ReadTables], scaled to a case's end points
// by [ScaledTable]).
//
// The envelope is found by a scan of f over a saturation grid and then
// solved exactly: every tangency point, outlet state and cut-limit state
// is a root of an analytic equation in f, f' and f”, solved by bracketed
// Newton iteration to 1e-14 in saturation. Nothing assumes a single
// inflection point, f(s1_init) = 0 or f ≤ 1.
//
// [Solve] returns a [Solution] that answers profile, outlet, average
// saturation and recovery questions at any tD. [Solver.SolveCase] is the
// batch entry point: it fills a flat [Result] and does not allocate.
package engine
