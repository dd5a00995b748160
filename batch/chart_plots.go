package batch

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/sampler"
	"github.com/sweepstat/sweepstat/studies"
	"github.com/sweepstat/sweepstat/summarize"
)

// words names the outputs and inputs of one study in chart labels, with
// the study's phase names.
type words struct {
	st *studies.Study
}

// recoveryUnit is the unit of every recovery axis.
func (w words) recoveryUnit() string {
	return "fraction of initial " + w.st.Phases.Displaced
}

func (w words) cut() string { return w.st.Phases.Injected + " cut" }

// output returns a short name of an output column for titles.
func (w words) output(name string) string {
	switch name {
	case engine.ColBreakthroughPVI:
		return "Breakthrough"
	case engine.ColRecoveryAtCutLimit:
		return "Recovery at " + label(w.st.Report.CutLimit) + " " + w.cut()
	case engine.ColRecoveryAtBreakthrough:
		return "Recovery at breakthrough"
	case engine.ColPVIAtCutLimit:
		return "Pore volumes to " + label(w.st.Report.CutLimit) + " " + w.cut()
	case engine.ColBreakthroughDays:
		return "Breakthrough day"
	case engine.ColProducedAtCutLimit:
		return upperFirst(w.st.Phases.Displaced) + " produced by " + label(w.st.Report.CutLimit) + " " + w.cut()
	}
	for _, x := range w.st.Report.PVI {
		if name == engine.CheckpointColumn("recovery", x) {
			return "Recovery at " + engine.PVIName(x) + " PVI"
		}
		if name == engine.CheckpointColumn("cut", x) {
			return upperFirst(w.cut()) + " at " + engine.PVIName(x) + " PVI"
		}
	}
	return name
}

// axisLabel returns an output's axis label with its unit.
func (w words) axisLabel(name string) string {
	switch {
	case name == engine.ColBreakthroughPVI:
		return "breakthrough (pore volumes injected, PVI)"
	case name == engine.ColPVIAtCutLimit:
		return "pore volumes injected (PVI)"
	case strings.HasPrefix(name, "recovery_"):
		return lowerFirst(w.output(name)) + " (" + w.recoveryUnit() + ")"
	case strings.HasPrefix(name, "cut_"):
		return w.output(name) + " (fraction)"
	case name == engine.ColBreakthroughDays:
		return "breakthrough (days from the start of injection)"
	case name == engine.ColProducedAtCutLimit:
		return lowerFirst(w.output(name)) + " (m³ at surface conditions)"
	}
	return name
}

// unitText returns a unit for labels: "" for dimensionless ("-").
func unitText(u string) string {
	if u == "-" {
		return ""
	}
	return u
}

// paramLabel returns an input's axis label with its unit.
func paramLabel(p engine.Param) string {
	if u := unitText(p.Unit()); u != "" {
		return p.String() + " (" + u + ")"
	}
	return p.String()
}

// lowerFirst lowers the first letter of a phrase unless the first word
// is an acronym or a formula (CO2).
func lowerFirst(s string) string {
	word, _, _ := strings.Cut(s, " ")
	if len(word) > 1 && strings.ToUpper(word) == word {
		return s
	}
	return strings.ToLower(s[:1]) + s[1:]
}

func upperFirst(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}

// groupDigits formats n with thousands separators.
func groupDigits(n int) string {
	s := strconv.Itoa(n)
	neg := strings.HasPrefix(s, "-")
	s = strings.TrimPrefix(s, "-")
	var b strings.Builder
	for i, c := range s {
		if i > 0 && (len(s)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(c)
	}
	if neg {
		return "−" + b.String()
	}
	return b.String()
}

// specText describes a distribution in a few words.
func specText(sp sampler.Spec) string {
	within := func() string {
		switch {
		case sp.HasMin && sp.HasMax:
			return ", kept within " + label(sp.Min) + " to " + label(sp.Max)
		case sp.HasMin:
			return ", at least " + label(sp.Min)
		case sp.HasMax:
			return ", at most " + label(sp.Max)
		}
		return ""
	}
	list := func(v []float64) string {
		s := make([]string, len(v))
		for i, x := range v {
			s[i] = label(x)
		}
		return strings.Join(s, ", ")
	}
	switch sp.Kind {
	case sampler.Fixed:
		return "fixed at " + label(sp.Value)
	case sampler.Uniform:
		return "uniform from " + label(sp.Min) + " to " + label(sp.Max)
	case sampler.Triangular:
		return "triangular, " + label(sp.Min) + " / " + label(sp.Mode) + " / " + label(sp.Max) + " (min / mode / max)"
	case sampler.PERT:
		return "PERT, " + label(sp.Min) + " / " + label(sp.Mode) + " / " + label(sp.Max) + " (min / mode / max)"
	case sampler.Normal:
		return "normal, mean " + label(sp.Mean) + ", sd " + label(sp.SD) + within()
	case sampler.LogNormal:
		return "lognormal, mean " + label(sp.Mean) + ", sd " + label(sp.SD) + within()
	case sampler.Discrete:
		s := "discrete " + list(sp.Values)
		if sp.Weights != nil {
			s += " (weights " + list(sp.Weights) + ")"
		}
		return s
	case sampler.SameAs:
		return "same as " + sp.SameAs
	}
	return sp.Kind.String()
}

// finiteRange returns the least and greatest finite values of vs (+Inf,
// −Inf when there is none).
func finiteRange(vs ...float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, v := range vs {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			continue
		}
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	return lo, hi
}

// subtitle writes the muted line under a chart's heading.
func (s *svgDoc) subtitle(t string) {
	s.text(14, 41, t, textStyle{Size: 12, Fill: colMuted})
}

// tornadoSVG draws one output's tornado: a bar per uncertain input, in
// rank order, from the base output to the output with the input at its
// low quantile (blue) and at its high quantile (orange).
func tornadoSVG(c tornadoChart, w words) *svgDoc {
	const rowH, top, bottom = 36.0, 58.0, 78.0
	left := 0.0
	lines := make([][2]string, len(c.Bars))
	for i, b := range c.Bars {
		p, _ := engine.ParamByName(b.Parameter)
		unit := unitText(p.Unit())
		if unit != "" {
			unit = " " + unit
		}
		lines[i] = [2]string{b.Parameter, label(b.InputLow) + " → " + label(b.InputHigh) + unit}
		left = math.Max(left, math.Max(textWidth(lines[i][0], 12.5), textWidth(lines[i][1], 11)))
	}
	left += 24
	right := 40.0
	for _, b := range c.Bars {
		right = math.Max(right, textWidth("swing "+label(b.Swing), 11.5)+16)
	}
	const width = 680.0
	height := top + rowH*float64(len(c.Bars)) + bottom
	s := newSVG(width, height, w.output(c.Output)+": tornado")
	s.heading(w.output(c.Output) + ": one input at a time")
	base := c.Base
	sub := "base case " + label(base)
	if math.IsNaN(base) {
		sub = "the base case (every input at its median) is outside the model"
	}
	s.subtitle(sub + " · bars sorted by swing, largest first")

	var vals []float64
	for _, b := range c.Bars {
		vals = append(vals, b.OutputAtLow, b.OutputAtHigh)
	}
	lo, hi := finiteRange(append(vals, base)...)
	x := niceAxis(lo, hi, 6, w.axisLabel(c.Output))
	y := axis{Lo: 0, Hi: float64(len(c.Bars))}
	f := newFrame(s, x, y, left, top, right, bottom)
	ref := base
	for i, b := range c.Bars {
		cy := top + rowH*(float64(i)+0.5)
		s.text(left-10, cy-2, lines[i][0], textStyle{Anchor: "end", Size: 12.5, Bold: true})
		s.text(left-10, cy+12, lines[i][1], textStyle{Anchor: "end", Size: 11, Fill: colMuted})
		if math.IsNaN(b.Swing) {
			s.text(left+8, cy+4, "no result: a moved case is outside the model", textStyle{Size: 11, Fill: colMuted})
			continue
		}
		r := ref
		if math.IsNaN(r) {
			r = (b.OutputAtLow + b.OutputAtHigh) / 2
		}
		const barH = 18
		s.rect(f.px(r), cy-barH/2, f.px(b.OutputAtLow)-f.px(r), barH, colBlue, "", 1)
		s.rect(f.px(r), cy-barH/2, f.px(b.OutputAtHigh)-f.px(r), barH, colOrange, "", 1)
		s.text(f.R+8, cy+4, "swing "+label(b.Swing), textStyle{Size: 11.5})
	}
	if !math.IsNaN(base) {
		bx := f.px(base)
		s.line(bx, top-6, bx, f.B, style{Stroke: colBlack, Width: 1.5})
	}
	lowQ := strconv.FormatFloat(100*w.st.Tornado.Low, 'g', 3, 64)
	highQ := strconv.FormatFloat(100*w.st.Tornado.High, 'g', 3, 64)
	s.legend(left, height-12, []legendItem{
		{Label: "input at its " + lowQ + " % quantile", Colour: colBlue, Kind: "box"},
		{Label: "at its " + highQ + " % quantile", Colour: colOrange, Kind: "box"},
		{Label: "base case", Colour: colBlack, Kind: "line"},
	})
	return s
}

// percentAxis is the 0–100 % probability axis.
func percentAxis(label string) axis {
	a := fixedAxis(0, 1, 5, label)
	a.Format = func(v float64) string { return strconv.FormatFloat(100*v, 'f', 0, 64) }
	return a
}

// exceedanceSVG draws the probability of exceeding each value of an
// output, with the P90, P50 and P10 marks.
func exceedanceSVG(e exceedance, w words, conv summarize.Convention) *svgDoc {
	s := newSVG(640, 400, w.output(e.Output)+": probability of exceeding")
	s.heading(w.output(e.Output) + ": probability of exceeding")
	r := valueRange([]exceedance{e})
	s.subtitle(countText(e.N, e.Rejected) + " · " + conventionShort(conv))
	xa := niceAxis(r.lo, r.hi, 6, w.axisLabel(e.Output))
	f := newFrame(s, xa, percentAxis("probability of exceeding (%)"), 70, 56, 24, 64)
	r.note(s, f)
	if len(e.Curve) == 0 {
		s.text((f.L+f.R)/2, (f.T+f.B)/2, "no valid case", textStyle{Anchor: "middle", Fill: colMuted})
		return s
	}
	s.polyline(f.pts(clipCurve(e.Curve, f.X.Lo, f.X.Hi)), style{Stroke: colBlue, Width: 2.2})
	for k, m := range e.Marks {
		x, y := f.px(m.Value), f.py(m.Exceed)
		guide := style{Stroke: colAxis, Dash: "3 3"}
		s.line(f.L, y, x, y, guide)
		s.line(x, y, x, f.B, guide)
		s.circle(x, y, 5, style{Fill: caseColour(k), Stroke: "#ffffff", Width: 1.5})
		anchor, dx := "start", 9.0
		if x > f.R-110 {
			anchor, dx = "end", -9
		}
		s.text(x+dx, y-7, m.Label+" = "+label(m.Value), textStyle{Anchor: anchor, Bold: true, Size: 12})
	}
	return s
}

// TailCut is the share of cases in each tail that an exceedance chart's
// value axis may leave out: when the values beyond the TailCut or the
// 1 − TailCut point would take more than half the axis, the axis ends
// there, so that one extreme case does not squeeze every other.
const TailCut = 0.005

// axisRange is the value range of exceedance curves and what it leaves
// out.
type axisRange struct {
	lo, hi       float64
	cutLo, cutHi bool
	min, max     float64 // the extreme values
}

// valueRange returns the value axis range of exceedance curves (see
// TailCut).
func valueRange(es []exceedance) axisRange {
	var xs []float64
	innerLo, innerHi := math.Inf(1), math.Inf(-1)
	for _, e := range es {
		for _, p := range e.Curve {
			xs = append(xs, p.X)
		}
		if len(e.Curve) > 0 {
			innerLo = math.Min(innerLo, curveAt(e.Curve, 1-TailCut))
			innerHi = math.Max(innerHi, curveAt(e.Curve, TailCut))
		}
	}
	r := axisRange{}
	r.min, r.max = finiteRange(xs...)
	r.lo, r.hi = r.min, r.max
	if !math.IsInf(innerHi, 0) && !math.IsNaN(innerHi) && r.max-innerHi > innerHi-r.min {
		r.hi, r.cutHi = innerHi, true
	}
	if !math.IsInf(innerLo, 0) && !math.IsNaN(innerLo) && innerLo-r.min > r.hi-innerLo {
		r.lo, r.cutLo = innerLo, true
	}
	return r
}

// note says on the chart which tail the axis leaves out.
func (r axisRange) note(s *svgDoc, f *frame) {
	pct := strconv.FormatFloat(100*TailCut, 'g', 3, 64)
	var parts []string
	if r.cutLo {
		parts = append(parts, "the lowest "+pct+" % (down to "+label(r.min)+")")
	}
	if r.cutHi {
		parts = append(parts, "the highest "+pct+" % (up to "+label(r.max)+")")
	}
	if len(parts) > 0 {
		s.text(f.R, f.T-6, "axis leaves out "+strings.Join(parts, " and "), textStyle{Anchor: "end", Size: 11, Fill: colMuted})
	}
}

// curveAt returns the value at which an exceedance curve (values
// increasing, probabilities decreasing) reaches probability y, by linear
// interpolation.
func curveAt(c []point, y float64) float64 {
	for i := 1; i < len(c); i++ {
		a, b := c[i-1], c[i]
		if a.Y >= y && b.Y <= y {
			if a.Y == b.Y {
				return a.X
			}
			return a.X + (b.X-a.X)*(a.Y-y)/(a.Y-b.Y)
		}
	}
	return c[len(c)-1].X
}

// clipCurve returns the part of a curve with increasing X inside
// [lo, hi], with points interpolated on the ends.
func clipCurve(c []point, lo, hi float64) []point {
	var out []point
	for i, p := range c {
		if p.X >= lo && p.X <= hi {
			if len(out) == 0 && i > 0 && c[i-1].X < lo {
				out = append(out, between(c[i-1], p, lo))
			}
			out = append(out, p)
			continue
		}
		if p.X > hi && i > 0 && c[i-1].X <= hi && c[i-1].X >= lo {
			out = append(out, between(c[i-1], p, hi))
		}
	}
	return out
}

// between returns the point of segment ab at x.
func between(a, b point, x float64) point {
	if b.X == a.X || math.IsInf(b.X-a.X, 0) {
		return point{x, a.Y}
	}
	return point{x, a.Y + (b.Y-a.Y)*(x-a.X)/(b.X-a.X)}
}

// countText says how many cases a chart shows.
func countText(n, rejected int) string {
	t := groupDigits(n) + " cases"
	if rejected > 0 {
		t += " (" + groupDigits(rejected) + " rejected or undefined left out)"
	}
	return t
}

func conventionShort(c summarize.Convention) string {
	if c == summarize.Cumulative {
		return "P90 is the high value (cumulative)"
	}
	return "P90 is the low value, exceeded with 90 % probability"
}

// checkpointsSVG draws the recovery exceedance curve of each checkpoint,
// with its P90, P50 and P10 as dots.
func checkpointsSVG(es []exceedance, w words) *svgDoc {
	s := newSVG(640, 400, "Recovery at each checkpoint: probability of exceeding")
	s.heading("Recovery at each checkpoint: probability of exceeding")
	s.subtitle("one curve per pore volume injected; dots at P90, P50 and P10")
	r := valueRange(es)
	f := newFrame(s, niceAxis(r.lo, r.hi, 6, "recovery ("+w.recoveryUnit()+")"), percentAxis("probability of exceeding (%)"), 70, 56, 24, 64)
	r.note(s, f)
	var items []legendItem
	for i, e := range es {
		c := seriesColour(i)
		s.polyline(f.pts(clipCurve(e.Curve, f.X.Lo, f.X.Hi)), style{Stroke: c, Width: 2})
		for _, m := range e.Marks {
			s.circle(f.px(m.Value), f.py(m.Exceed), 3.5, style{Fill: c, Stroke: "#ffffff", Width: 1})
		}
		items = append(items, legendItem{Label: strings.TrimPrefix(w.output(e.Output), "Recovery at "), Colour: c, Kind: "line"})
	}
	s.legend(f.L, s.h-8, items)
	return s
}

// bandSVG draws P90, P50 and P10 of recovery (kind "recovery") or of the
// outlet cut (kind "cut") against pore volumes injected, from curves.arrow.
func bandSVG(rows []summarize.CurveRow, kind string, w words) *svgDoc {
	title := "Recovery by pore volumes injected"
	yLabel := "recovery (" + w.recoveryUnit() + ")"
	if kind == "cut" {
		title = upperFirst(w.cut()) + " at the outlet by pore volumes injected"
		yLabel = w.cut() + " at the outlet (fraction)"
	}
	s := newSVG(640, 400, title)
	s.heading(title)
	s.subtitle("P50 line, shaded between P90 and P10, at the study's checkpoints")
	var p90, p50, p10 []point
	if kind == "recovery" {
		// Nothing is produced before injection starts: every case's
		// recovery is 0 at 0 PVI.
		p90, p50, p10 = []point{{0, 0}}, []point{{0, 0}}, []point{{0, 0}}
	}
	for _, r := range rows {
		a, b, c := r.RecoveryP90, r.RecoveryP50, r.RecoveryP10
		if kind == "cut" {
			a, b, c = r.CutP90, r.CutP50, r.CutP10
		}
		if math.IsNaN(a) || math.IsNaN(b) || math.IsNaN(c) {
			continue
		}
		p90, p50, p10 = append(p90, point{r.PVI, a}), append(p50, point{r.PVI, b}), append(p10, point{r.PVI, c})
	}
	var xs, ys []float64
	for _, line := range [][]point{p90, p50, p10} {
		for _, p := range line {
			xs, ys = append(xs, p.X), append(ys, p.Y)
		}
	}
	_, xhi := finiteRange(xs...)
	_, yhi := finiteRange(ys...)
	ya := niceAxis(0, math.Max(yhi, 0.05), 5, yLabel)
	if kind == "cut" || yhi > 0.6 {
		ya = fixedAxis(0, 1, 5, yLabel)
	}
	f := newFrame(s, niceAxis(0, xhi, 6, "pore volumes injected (PVI)"), ya, 70, 56, 44, 64)
	if len(p50) == 0 {
		return s
	}
	band := append(f.pts(p90), reversed(f.pts(p10))...)
	s.polygon(band, style{Fill: colSkyBlue, Opacity: 0.35})
	s.polyline(f.pts(p90), style{Stroke: colBlue, Width: 1.2, Dash: "4 3"})
	s.polyline(f.pts(p10), style{Stroke: colBlue, Width: 1.2, Dash: "4 3"})
	s.polyline(f.pts(p50), style{Stroke: colBlue, Width: 2.4})
	for _, p := range f.pts(p50) {
		s.circle(p.X, p.Y, 3, style{Fill: colBlue})
	}
	ends := []struct {
		name string
		line []point
	}{{"P90", p90}, {"P50", p50}, {"P10", p10}}
	// End labels top to bottom, pushed apart where the lines end close
	// together.
	type endLabel struct {
		name string
		y    float64
	}
	var labels []endLabel
	for _, e := range ends {
		labels = append(labels, endLabel{e.name, f.py(e.line[len(e.line)-1].Y) + 4})
	}
	slices.SortStableFunc(labels, func(a, b endLabel) int { return cmp.Compare(a.y, b.y) })
	for i := range labels {
		if i > 0 && labels[i].y < labels[i-1].y+12 {
			labels[i].y = labels[i-1].y + 12
		}
		s.text(f.R+6, labels[i].y, labels[i].name, textStyle{Size: 11, Bold: labels[i].name == "P50"})
	}
	s.legend(f.L, s.h-8, []legendItem{
		{Label: "P50", Colour: colBlue, Kind: "line"},
		{Label: "P90 to P10", Colour: colSkyBlue, Kind: "box", Alpha: 0.5},
	})
	return s
}

func reversed(p []point) []point {
	out := make([]point, len(p))
	for i := range p {
		out[len(p)-1-i] = p[i]
	}
	return out
}

// fracFlowSVG draws the fractional flow of one P case with its upper
// concave envelope over [s1_init, S_b].
func fracFlowSVG(c pCase, k int, w words, key string) *svgDoc {
	title := c.Label + " case: fractional flow"
	s := newSVG(440, 360, title)
	s.heading(title)
	s.subtitle("case " + strconv.Itoa(c.Case) + " · " + lowerFirst(w.output(key)) + " " + label(c.Value))
	sol := c.Sol
	curve := fracFlowCurve(sol, 240)
	var ys []float64
	for _, p := range curve {
		ys = append(ys, p.Y)
	}
	lo, hi := finiteRange(ys...)
	ya := fixedAxis(0, 1, 5, "f, "+w.st.Phases.Injected+" fraction of flow")
	if lo < -1e-9 || hi > 1+1e-9 {
		ya = niceAxis(math.Min(lo, 0), math.Max(hi, 1), 5, ya.Label)
	}
	xa := fixedAxis(0, 1, 5, w.st.Phases.Injected+" saturation S (fraction)")
	f := newFrame(s, xa, ya, 64, 52, 16, 64)
	s.polyline(f.pts(curve), style{Stroke: caseColour(k), Width: 2})
	if sol.Status != engine.StatusOK {
		s.text((f.L+f.R)/2, f.T+20, "outside the 1-D model: "+sol.Status.String(), textStyle{Anchor: "middle", Fill: colMuted})
		return s
	}
	s.polyline(f.pts(envelopeCurve(sol)), style{Stroke: colBlack, Width: 2.2, Dash: "6 4"})
	s.circle(f.px(sol.Init), f.py(sol.FInit), 4, style{Fill: colBlack})
	fs := sol.FrontSaturation()
	ff := sol.Flow.F(fs)
	if fs != sol.Init {
		s.circle(f.px(fs), f.py(ff), 4.5, style{Fill: caseColour(k), Stroke: colBlack, Width: 1.2})
		s.text(f.px(fs)+8, f.py(ff)+14, "front S = "+label(fs), textStyle{Size: 11})
	}
	s.legend(f.L, s.h-8, []legendItem{
		{Label: "f(S)", Colour: caseColour(k), Kind: "line"},
		{Label: "upper concave envelope", Colour: colBlack, Kind: "dash"},
	})
	return s
}

// profileSVG draws the saturation profiles of the P cases after tD pore
// volumes.
func profileSVG(cases []pCase, tD float64, w words) *svgDoc {
	title := "Saturation profile at " + label(tD) + " PVI"
	s := newSVG(440, 360, title)
	s.heading(title)
	s.subtitle("the P90, P50 and P10 cases, from the exact solution")
	xa := fixedAxis(0, 1, 5, "distance from the injector, xD (fraction of length)")
	ya := fixedAxis(0, 1, 5, w.st.Phases.Injected+" saturation S (fraction)")
	f := newFrame(s, xa, ya, 64, 52, 16, 64)
	var items []legendItem
	for _, c := range cases {
		col := caseColour(caseIndex(c.Label))
		s.polyline(f.pts(profileCurve(c.Sol, tD)), style{Stroke: col, Width: 2.2})
		items = append(items, legendItem{Label: c.Label + " case", Colour: col, Kind: "line"})
	}
	s.legend(f.L, s.h-8, items)
	return s
}

// caseIndex returns the colour index of a P label.
func caseIndex(label string) int {
	switch label {
	case "P90":
		return 0
	case "P50":
		return 1
	}
	return 2
}

// histogramSVG draws the sampled values of one input against the
// probability of each bin under its specified distribution.
func histogramSVG(h histogram) *svgDoc {
	s := newSVG(420, 310, h.Param.String()+": sampled values")
	s.heading(h.Param.String())
	s.subtitle(specText(h.Spec))
	n := float64(max(h.N, 1))
	var ys []float64
	for i, c := range h.Counts {
		ys = append(ys, float64(c)/n, h.Expected[i])
	}
	_, yhi := finiteRange(ys...)
	ya := niceAxis(0, yhi, 4, "share of cases (%)")
	ya.Format = func(v float64) string { return label(100 * v) }
	var xa axis
	if h.Discrete {
		lo, hi := h.Edges[0], h.Edges[len(h.Edges)-1]
		pad := (hi - lo) * 0.15
		if pad == 0 {
			pad = math.Max(math.Abs(lo)*0.1, 0.5)
		}
		xa = niceAxis(lo-pad, hi+pad, 5, paramLabel(h.Param))
	} else {
		xa = fixedAxis(h.Edges[0], h.Edges[len(h.Edges)-1], 5, paramLabel(h.Param))
	}
	f := newFrame(s, xa, ya, 66, 52, 16, 66)
	if h.Discrete {
		gap := math.Inf(1)
		for i := 1; i < len(h.Edges); i++ {
			gap = math.Min(gap, h.Edges[i]-h.Edges[i-1])
		}
		half := (f.R - f.L) * 0.04
		if !math.IsInf(gap, 1) {
			half = math.Min(half*2, (f.px(h.Edges[0]+gap)-f.px(h.Edges[0]))*0.3)
		}
		for i, v := range h.Edges {
			x := f.px(v)
			s.rect(x-half, f.py(float64(h.Counts[i])/n), 2*half, f.B-f.py(float64(h.Counts[i])/n), colSkyBlue, "", 1)
			ye := f.py(h.Expected[i])
			s.line(x-half-4, ye, x+half+4, ye, style{Stroke: colBlack, Width: 2})
		}
	} else {
		var step []point
		for i, c := range h.Counts {
			x0, x1 := f.px(h.Edges[i]), f.px(h.Edges[i+1])
			y := f.py(float64(c) / n)
			s.rect(x0+0.5, y, math.Max(x1-x0-1, 0.5), f.B-y, colSkyBlue, "", 1)
			ye := f.py(h.Expected[i])
			step = append(step, point{x0, ye}, point{x1, ye})
		}
		s.polyline(step, style{Stroke: colBlack, Width: 1.8})
	}
	s.legend(f.L, s.h-8, []legendItem{
		{Label: "sampled (" + groupDigits(int(h.N)) + " cases)", Colour: colSkyBlue, Kind: "box"},
		{Label: "specified distribution", Colour: colBlack, Kind: "line"},
	})
	return s
}

// corrSVG draws the achieved rank-correlation matrix of the inputs, with
// the study's targets beside the achieved values.
func corrSVG(m *rankMatrix) *svgDoc {
	d := len(m.Names)
	const cell = 46.0
	left := 0.0
	for _, n := range m.Names {
		left = math.Max(left, textWidth(n, 12))
	}
	left += 24
	bottom := left*0.72 + 24
	top := 58.0
	width := math.Max(left+cell*float64(d)+24, 460)
	height := top + cell*float64(d) + bottom
	s := newSVG(width, height, "Achieved rank correlation of the inputs")
	s.heading("Achieved rank correlation of the inputs")
	sub := "Spearman ρ over " + groupDigits(m.N) + " cases"
	if m.N < m.Total {
		sub += " (the first of " + groupDigits(m.Total) + ")"
	}
	s.subtitle(sub + "; the study's target in small type")
	for i := range d {
		y := top + cell*float64(i)
		s.text(left-8, y+cell/2+4, m.Names[i], textStyle{Anchor: "end"})
		for j := range d {
			x := left + cell*float64(j)
			r := m.Rho[i][j]
			fill := "#f2f2f2"
			switch {
			case i == j:
			case math.IsNaN(r):
				fill = "#ffffff"
			case r >= 0:
				fill = blend("#ffffff", colVermilion, r)
			default:
				fill = blend("#ffffff", colBlue, -r)
			}
			s.rect(x, y, cell, cell, fill, "#ffffff", 1)
			ink := colInk
			if i != j && math.Abs(r) > 0.55 {
				ink = "#ffffff"
			}
			txt := strconv.FormatFloat(r, 'f', 2, 64)
			if txt == "-0.00" {
				txt = "0.00"
			}
			txt = minus(txt)
			if i == j {
				txt = "1"
			} else if math.IsNaN(r) {
				txt = "–"
			}
			t, hasT := m.Target[[2]int{min(i, j), max(i, j)}]
			cy := y + cell/2 + 4
			if hasT {
				cy -= 5
			}
			s.text(x+cell/2, cy, txt, textStyle{Anchor: "middle", Size: 11.5, Fill: ink, Bold: hasT})
			if hasT {
				s.text(x+cell/2, cy+13, "("+minus(strconv.FormatFloat(t, 'g', 3, 64))+")", textStyle{Anchor: "middle", Size: 9.5, Fill: ink})
			}
		}
	}
	yb := top + cell*float64(d) + 8
	for j := range d {
		x := left + cell*float64(j) + cell/2
		s.text(x, yb, m.Names[j], textStyle{Anchor: "end", Rotate: -45, Baseline: "hanging"})
	}
	return s
}

// chartName returns the file name of a chart in the charts folder.
func chartName(kind, what string) string {
	what = strings.Map(func(r rune) rune {
		switch {
		case r >= 'a' && r <= 'z', r >= '0' && r <= '9', r == '_', r == '.', r == '-':
			return r
		case r >= 'A' && r <= 'Z':
			return r + ('a' - 'A')
		}
		return '-'
	}, what)
	if what == "" {
		return kind + ".svg"
	}
	return fmt.Sprintf("%s-%s.svg", kind, what)
}
