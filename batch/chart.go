package batch

import (
	"html"
	"math"
	"strconv"
	"strings"
)

// The charts of the report are drawn by this small SVG writer: a chart is
// a fixed-size SVG document (viewBox in px) with an optional plot frame of
// two linear axes. Every chart is also written on its own as an .svg file,
// so the writer emits complete, namespaced documents.

// Colours of the Okabe & Ito (2008) palette for colour-blind readers
// ("Color Universal Design", from memory), and the greys of the frames.
const (
	colBlack     = "#000000"
	colOrange    = "#E69F00"
	colSkyBlue   = "#56B4E9"
	colGreen     = "#009E73" // bluish green
	colYellow    = "#F0E442"
	colBlue      = "#0072B2"
	colVermilion = "#D55E00"
	colPurple    = "#CC79A7" // reddish purple

	colInk   = "#1b1b1b"
	colMuted = "#5a5a5a"
	colGrid  = "#e3e3e3"
	colAxis  = "#8c8c8c"
)

// seriesColour returns the palette colour of line i of several on white,
// cycling (yellow is left out: too faint on white).
func seriesColour(i int) string {
	c := [...]string{colBlue, colOrange, colGreen, colVermilion, colPurple, colSkyBlue, colBlack}
	return c[i%len(c)]
}

// numSeriesColours is how many lines seriesColour tells apart.
const numSeriesColours = 7

// caseColour returns the colour of the P90 (0), P50 (1) and P10 (2) case.
func caseColour(k int) string {
	return [3]string{colBlue, colGreen, colVermilion}[k]
}

// chartFont is the font stack of every chart; sizes are in px of the
// viewBox.
const chartFont = "system-ui, -apple-system, 'Segoe UI', Roboto, 'DejaVu Sans', Arial, sans-serif"

// charWidth estimates the advance of one character of chartFont as a
// fraction of the font size (DejaVu Sans, the widest of the stack, averages
// about 0.6 em on mixed text; common practice for layout without font
// metrics).
const charWidth = 0.6

// textWidth estimates the width in px of s set at size px.
func textWidth(s string, size float64) float64 {
	return float64(len([]rune(s))) * size * charWidth
}

// svgDoc is one SVG document being written.
type svgDoc struct {
	b    strings.Builder
	w, h float64
}

// newSVG starts a document of w×h px whose accessible name is title.
func newSVG(w, h float64, title string) *svgDoc {
	s := &svgDoc{w: w, h: h}
	s.b.WriteString(`<svg xmlns="http://www.w3.org/2000/svg" class="chart" role="img" viewBox="0 0 `)
	s.b.WriteString(num(w) + " " + num(h) + `" width="` + num(w) + `" height="` + num(h) + `"`)
	s.b.WriteString(` font-family="` + esc(chartFont) + `" font-size="12" fill="` + colInk + `">`)
	s.b.WriteString("<title>" + esc(title) + "</title>")
	s.rect(0, 0, w, h, "#ffffff", "", 1)
	return s
}

// String closes the document and returns it (without an XML declaration,
// so that it can be placed inline in HTML).
func (s *svgDoc) String() string {
	return s.b.String() + "</svg>\n"
}

// file returns the document as a standalone .svg file.
func (s *svgDoc) file() []byte {
	return []byte(`<?xml version="1.0" encoding="UTF-8"?>` + "\n" + s.String())
}

// num formats a coordinate: two decimals at most, no trailing zeros.
func num(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "0"
	}
	s := strconv.FormatFloat(v, 'f', 2, 64)
	s = strings.TrimRight(s, "0")
	s = strings.TrimSuffix(s, ".")
	if s == "-0" {
		s = "0"
	}
	return s
}

func esc(s string) string { return html.EscapeString(s) }

// style holds the stroke and fill of a shape; empty fields are omitted.
type style struct {
	Stroke  string
	Width   float64 // stroke width; 0 means 1
	Dash    string  // stroke-dasharray
	Fill    string  // "" means none
	Opacity float64 // fill opacity; 0 means 1
}

func (st style) attrs() string {
	var b strings.Builder
	if st.Fill == "" {
		b.WriteString(` fill="none"`)
	} else {
		b.WriteString(` fill="` + st.Fill + `"`)
		if st.Opacity > 0 && st.Opacity < 1 {
			b.WriteString(` fill-opacity="` + num(st.Opacity) + `"`)
		}
	}
	if st.Stroke != "" {
		w := st.Width
		if w == 0 {
			w = 1
		}
		b.WriteString(` stroke="` + st.Stroke + `" stroke-width="` + num(w) + `"`)
		if st.Dash != "" {
			b.WriteString(` stroke-dasharray="` + st.Dash + `"`)
		}
		b.WriteString(` stroke-linejoin="round" stroke-linecap="butt"`)
	}
	return b.String()
}

func (s *svgDoc) rect(x, y, w, h float64, fill, stroke string, opacity float64) {
	if w < 0 {
		x, w = x+w, -w
	}
	if h < 0 {
		y, h = y+h, -h
	}
	s.b.WriteString(`<rect x="` + num(x) + `" y="` + num(y) + `" width="` + num(w) + `" height="` + num(h) + `"`)
	s.b.WriteString(style{Fill: fill, Stroke: stroke, Opacity: opacity}.attrs() + "/>")
}

func (s *svgDoc) line(x1, y1, x2, y2 float64, st style) {
	s.b.WriteString(`<line x1="` + num(x1) + `" y1="` + num(y1) + `" x2="` + num(x2) + `" y2="` + num(y2) + `"`)
	s.b.WriteString(st.attrs() + "/>")
}

// point is one point of a polyline, in data or pixel units.
type point struct{ X, Y float64 }

func (s *svgDoc) poly(tag string, pts []point, st style) {
	if len(pts) == 0 {
		return
	}
	s.b.WriteString("<" + tag + ` points="`)
	for i, p := range pts {
		if i > 0 {
			s.b.WriteByte(' ')
		}
		s.b.WriteString(num(p.X) + "," + num(p.Y))
	}
	s.b.WriteString(`"` + st.attrs() + "/>")
}

func (s *svgDoc) polyline(pts []point, st style) { s.poly("polyline", pts, st) }
func (s *svgDoc) polygon(pts []point, st style)  { s.poly("polygon", pts, st) }

func (s *svgDoc) circle(x, y, r float64, st style) {
	s.b.WriteString(`<circle cx="` + num(x) + `" cy="` + num(y) + `" r="` + num(r) + `"`)
	s.b.WriteString(st.attrs() + "/>")
}

// textStyle sets a text's anchor ("start", "middle", "end"), size (0: 12),
// weight ("" or "bold"), colour ("" inherits) and rotation in degrees about
// its anchor point.
type textStyle struct {
	Anchor string
	Size   float64
	Bold   bool
	Fill   string
	Rotate float64
	// Baseline is the dominant-baseline: "" (alphabetic), "middle" or
	// "hanging".
	Baseline string
}

func (s *svgDoc) text(x, y float64, t string, ts textStyle) {
	s.b.WriteString(`<text x="` + num(x) + `" y="` + num(y) + `"`)
	if ts.Anchor != "" && ts.Anchor != "start" {
		s.b.WriteString(` text-anchor="` + ts.Anchor + `"`)
	}
	if ts.Size != 0 && ts.Size != 12 {
		s.b.WriteString(` font-size="` + num(ts.Size) + `"`)
	}
	if ts.Bold {
		s.b.WriteString(` font-weight="600"`)
	}
	if ts.Fill != "" {
		s.b.WriteString(` fill="` + ts.Fill + `"`)
	}
	if ts.Baseline != "" {
		s.b.WriteString(` dominant-baseline="` + ts.Baseline + `"`)
	}
	if ts.Rotate != 0 {
		s.b.WriteString(` transform="rotate(` + num(ts.Rotate) + " " + num(x) + " " + num(y) + `)"`)
	}
	s.b.WriteString(">" + esc(t) + "</text>")
}

// axis is one linear axis of a frame.
type axis struct {
	Lo, Hi float64 // data range shown
	Ticks  []float64
	Label  string // with the unit, e.g. "breakthrough (PVI)"
	// Format formats a tick label; nil means tickText with the tick step.
	Format func(float64) string
}

// niceStep returns a step of the form {1, 2, 2.5, 5}·10^k near span/n.
func niceStep(span float64, n int) float64 {
	if !(span > 0) || math.IsInf(span, 0) {
		return 1
	}
	raw := span / float64(n)
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	for _, m := range []float64{1, 2, 2.5, 5, 10} {
		if m*mag >= raw*0.999 {
			return m * mag
		}
	}
	return 10 * mag
}

// niceAxis returns an axis covering [lo, hi] widened to whole ticks, with
// about n ticks. A degenerate or non-finite range is widened around its
// value.
func niceAxis(lo, hi float64, n int, label string) axis {
	if math.IsNaN(lo) || math.IsInf(lo, 0) || math.IsNaN(hi) || math.IsInf(hi, 0) {
		lo, hi = 0, 1
	}
	if lo > hi {
		lo, hi = hi, lo
	}
	if hi-lo <= 1e-12*math.Max(1, math.Abs(lo)) {
		d := math.Max(math.Abs(lo)*0.05, 0.5)
		if lo == 0 {
			d = 1
		}
		lo, hi = lo-d, hi+d
	}
	step := niceStep(hi-lo, n)
	a := axis{Lo: math.Floor(lo/step+1e-9) * step, Hi: math.Ceil(hi/step-1e-9) * step, Label: label}
	a.Ticks = ticksOf(a.Lo, a.Hi, step)
	return a
}

// fixedAxis returns an axis on exactly [lo, hi] with about n nice ticks
// inside it.
func fixedAxis(lo, hi float64, n int, label string) axis {
	step := niceStep(hi-lo, n)
	return axis{Lo: lo, Hi: hi, Label: label, Ticks: ticksOf(math.Ceil(lo/step-1e-9)*step, hi, step)}
}

func ticksOf(from, to, step float64) []float64 {
	var t []float64
	for k := 0; k <= 200; k++ {
		v := from + float64(k)*step
		if v > to+step*1e-9 {
			break
		}
		if math.Abs(v) < step*1e-9 {
			v = 0
		}
		t = append(t, v)
	}
	return t
}

// tickText formats v with the decimals a tick step needs.
func tickText(v, step float64) string {
	d := 0
	if step > 0 && step < 1 {
		d = int(math.Ceil(-math.Log10(step) - 1e-9))
		if m := step * math.Pow(10, float64(d)); math.Abs(m-math.Round(m)) > 1e-6 {
			d++ // 0.25, 0.025, …
		}
	}
	return minus(strconv.FormatFloat(v, 'f', d, 64))
}

// minus replaces a leading hyphen with a typographic minus sign.
func minus(s string) string {
	if strings.HasPrefix(s, "-") {
		return "−" + s[1:]
	}
	return s
}

// nonFinite returns how charts and tables print NaN ("–") and ±Inf, and
// false for a finite v.
func nonFinite(v float64) (string, bool) {
	switch {
	case math.IsNaN(v):
		return "–", true
	case math.IsInf(v, 1):
		return "∞", true
	case math.IsInf(v, -1):
		return "−∞", true
	}
	return "", false
}

// label formats a value for a chart label: three significant digits.
func label(v float64) string {
	if s, ok := nonFinite(v); ok {
		return s
	}
	a := math.Abs(v)
	if a != 0 && (a < 1e-4 || a >= 1e6) {
		// 5.7e−5: three digits, no padded exponent.
		m, e, _ := strings.Cut(strconv.FormatFloat(v, 'e', 2, 64), "e")
		if strings.Contains(m, ".") {
			m = strings.TrimSuffix(strings.TrimRight(m, "0"), ".")
		}
		exp, _ := strconv.Atoi(e)
		return minus(m) + "e" + minus(strconv.Itoa(exp))
	}
	s := strconv.FormatFloat(v, 'g', 3, 64)
	if strings.ContainsAny(s, "e") {
		s = strconv.FormatFloat(v, 'f', 0, 64)
	}
	return minus(s)
}

// frame is a plot area with two axes inside an SVG document.
type frame struct {
	*svgDoc
	X, Y       axis
	L, T, R, B float64 // plot area edges in px
}

// newFrame draws the grid, ticks and axis labels of a plot area with the
// given margins (left, top, right, bottom) and returns it.
func newFrame(s *svgDoc, x, y axis, left, top, right, bottom float64) *frame {
	f := &frame{svgDoc: s, X: x, Y: y, L: left, T: top, R: s.w - right, B: s.h - bottom}
	f.drawAxes()
	return f
}

// px maps a data x to px, clamped to a little outside the frame.
func (f *frame) px(x float64) float64 {
	v := f.L + (x-f.X.Lo)/(f.X.Hi-f.X.Lo)*(f.R-f.L)
	return clampPx(v, f.L-20, f.R+20)
}

// py maps a data y to px.
func (f *frame) py(y float64) float64 {
	v := f.B - (y-f.Y.Lo)/(f.Y.Hi-f.Y.Lo)*(f.B-f.T)
	return clampPx(v, f.T-20, f.B+20)
}

func clampPx(v, lo, hi float64) float64 {
	if math.IsNaN(v) {
		return lo
	}
	return math.Min(math.Max(v, lo), hi)
}

// pts maps data points to px.
func (f *frame) pts(data []point) []point {
	out := make([]point, len(data))
	for i, p := range data {
		out[i] = point{f.px(p.X), f.py(p.Y)}
	}
	return out
}

func (f *frame) drawAxes() {
	grid := style{Stroke: colGrid}
	stepOf := func(t []float64) float64 {
		if len(t) > 1 {
			return t[1] - t[0]
		}
		return 1
	}
	xs, ys := stepOf(f.X.Ticks), stepOf(f.Y.Ticks)
	for _, t := range f.Y.Ticks {
		y := f.py(t)
		f.line(f.L, y, f.R, y, grid)
		txt := tickText(t, ys)
		if f.Y.Format != nil {
			txt = f.Y.Format(t)
		}
		f.text(f.L-6, y, txt, textStyle{Anchor: "end", Size: 12, Fill: colMuted, Baseline: "middle"})
	}
	for _, t := range f.X.Ticks {
		x := f.px(t)
		f.line(x, f.T, x, f.B, grid)
		f.line(x, f.B, x, f.B+4, style{Stroke: colAxis})
		txt := tickText(t, xs)
		if f.X.Format != nil {
			txt = f.X.Format(t)
		}
		f.text(x, f.B+17, txt, textStyle{Anchor: "middle", Size: 12, Fill: colMuted})
	}
	f.line(f.L, f.B, f.R, f.B, style{Stroke: colAxis})
	f.line(f.L, f.T, f.L, f.B, style{Stroke: colAxis})
	if f.X.Label != "" {
		f.text((f.L+f.R)/2, f.B+37, f.X.Label, textStyle{Anchor: "middle", Size: 13})
	}
	if f.Y.Label != "" {
		x := f.L - 48
		f.text(x, (f.T+f.B)/2, f.Y.Label, textStyle{Anchor: "middle", Size: 13, Rotate: -90})
	}
}

// heading writes a chart's title at the top left.
func (s *svgDoc) heading(t string) {
	s.text(14, 22, t, textStyle{Size: 15, Bold: true})
}

// legendItem is one entry of a legend: a line, a dashed line, a filled
// box or a dot in a colour.
type legendItem struct {
	Label  string
	Colour string
	Kind   string // "line", "dash", "box", "dot"
	Alpha  float64
}

// legend writes items in one row starting at (x, y) and returns the x
// after the last item.
func (s *svgDoc) legend(x, y float64, items []legendItem) float64 {
	for _, it := range items {
		switch it.Kind {
		case "box":
			s.rect(x, y-9, 16, 10, it.Colour, "", it.Alpha)
		case "dot":
			s.circle(x+8, y-4, 4, style{Fill: it.Colour, Stroke: "#ffffff", Width: 1})
		case "dash":
			s.line(x, y-4, x+18, y-4, style{Stroke: it.Colour, Width: 2.2, Dash: "5 3"})
		default:
			s.line(x, y-4, x+18, y-4, style{Stroke: it.Colour, Width: 2.2})
		}
		s.text(x+23, y, it.Label, textStyle{Size: 12, Fill: colMuted})
		x += 23 + textWidth(it.Label, 12) + 16
	}
	return x
}

// blend mixes two #rrggbb colours: t = 0 gives a, 1 gives b.
func blend(a, b string, t float64) string {
	pa, pb := rgbOf(a), rgbOf(b)
	t = math.Min(math.Max(t, 0), 1)
	var out [3]int
	for i := range out {
		out[i] = int(math.Round(float64(pa[i])*(1-t) + float64(pb[i])*t))
	}
	const hexd = "0123456789abcdef"
	buf := []byte{'#', 0, 0, 0, 0, 0, 0}
	for i, v := range out {
		buf[1+2*i], buf[2+2*i] = hexd[v>>4], hexd[v&15]
	}
	return string(buf)
}

func rgbOf(c string) [3]int {
	var out [3]int
	if len(c) != 7 || c[0] != '#' {
		return out
	}
	for i := range out {
		v, err := strconv.ParseUint(c[1+2*i:3+2*i], 16, 8)
		if err == nil {
			out[i] = int(v)
		}
	}
	return out
}
