package engine

import "math"

// volumes fills the dimensional outputs of r from its dimensionless ones
// and the resolved case in s.sol, or sets them to NaN when the model has
// no Volumes or the case was not solved.
//
// With pore volume PV = length·area·porosity, tD pore volumes injected
// are tD·PV reservoir m³ of phase 1, reached at the day t where the
// cumulative injection V(t) = ∫₀ᵗ q dt equals tD·PV. Phase 2 produced by
// then is (S̄ − s1_init)·PV at reservoir conditions (every reservoir m³ of
// phase 1 that stays displaces one of phase 2, the resident phase 2
// being incompressible), recovery·(1 − s1_init)·PV, and divided by the
// formation volume factor b2 at surface conditions.
func (s *Solver) volumes(pvi []float64, r *Result) {
	m := s.Model
	if m == nil || m.Volumes == nil {
		return
	}
	r.DaysAt = resize(r.DaysAt, len(pvi))
	r.ProducedAt = resize(r.ProducedAt, len(pvi))
	p := &s.sol.Params
	nan := math.NaN()
	r.PoreVolume, r.BreakthroughDays, r.ProducedAtBreakthrough, r.DaysAtCutLimit, r.ProducedAtCutLimit = nan, nan, nan, nan, nan
	for i := range pvi {
		r.DaysAt[i], r.ProducedAt[i] = nan, nan
	}
	if r.Status == StatusInvalid {
		return
	}
	pv := p[LengthM] * p[AreaM2] * p[Porosity]
	r.PoreVolume = pv
	if r.Status != StatusOK {
		return
	}
	rate := m.Volumes.Schedule
	q := p[RateM3PerDay]
	days := func(tD float64) float64 { return injectionDays(rate, q, tD*pv) }
	// The reservoir volume of phase 2 produced per unit of recovery.
	per := (1 - s.sol.Init) * pv / p[B2]
	r.BreakthroughDays = days(r.BreakthroughPVI)
	r.ProducedAtBreakthrough = r.RecoveryAtBreakthrough * per
	for i, t := range pvi {
		r.DaysAt[i] = days(t)
		r.ProducedAt[i] = r.RecoveryAt[i] * per
	}
	r.DaysAtCutLimit = days(r.PVIAtCutLimit)
	r.ProducedAtCutLimit = r.RecoveryAtCutLimit * per
}

// injectionDays returns the day at which the cumulative injection reaches
// v m³: v/q at the constant rate q when schedule is nil, otherwise by
// walking the schedule's steps (the last rate holds forever). NaN stays
// NaN and +Inf stays +Inf.
func injectionDays(schedule []RateStep, q, v float64) float64 {
	if schedule == nil {
		return v / q
	}
	if math.IsNaN(v) {
		return v
	}
	done := 0.0 // injected by the start of step k
	for k, st := range schedule {
		if k+1 == len(schedule) {
			break
		}
		next := schedule[k+1].FromDay
		step := st.M3PerDay * (next - st.FromDay)
		if done+step >= v && st.M3PerDay > 0 {
			return st.FromDay + (v-done)/st.M3PerDay
		}
		done += step
	}
	last := schedule[len(schedule)-1]
	return last.FromDay + (v-done)/last.M3PerDay
}
