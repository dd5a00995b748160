package cli

import (
	"fmt"
	"io"
	"time"

	"github.com/schollz/progressbar/v3"

	"github.com/sweepstat/sweepstat/batch"
)

// PlainInterval is the least time between two plain progress lines of a
// phase.
const PlainInterval = 2 * time.Second

// NewProgress returns the progress display for ios: nil (none) when quiet,
// a bar on ErrOut when it is a terminal, plain lines otherwise. now is the
// clock of the plain lines; nil means time.Now.
func NewProgress(ios *IOStreams, quiet bool, now func() time.Time) batch.Progress {
	switch {
	case quiet:
		return nil
	case ios.IsTerminal:
		return &BarProgress{W: ios.ErrOut}
	}
	return &PlainProgress{W: ios.ErrOut, Now: now, Every: PlainInterval}
}

// PlainProgress writes progress as lines for logs, such as
//
//	demo-updip-waterflood: solving 40% (8000/20000 cases)
//
// at most once every Every (of the clock Now) while a phase runs, and once
// when it finishes. A zero Every means [PlainInterval], a nil Now means
// time.Now. Calls must come from one goroutine, as [batch.Progress] says.
type PlainProgress struct {
	W     io.Writer
	Now   func() time.Time
	Every time.Duration

	study, phase string
	total, done  int
	last         time.Time // when the last line was written, or the phase began
	printed      int       // done at the last line; -1 before any
}

var _ batch.Progress = (*PlainProgress)(nil)

func (p *PlainProgress) now() time.Time {
	if p.Now == nil {
		return time.Now()
	}
	return p.Now()
}

// Start begins a phase; it prints nothing.
func (p *PlainProgress) Start(study, phase string, total int) {
	p.study, p.phase, p.total, p.done = study, phase, total, 0
	p.last, p.printed = p.now(), -1
}

// Add counts n more units and prints a line if Every has passed since the
// last one.
func (p *PlainProgress) Add(n int) {
	p.done += n
	every := p.Every
	if every <= 0 {
		every = PlainInterval
	}
	if t := p.now(); t.Sub(p.last) >= every {
		p.line()
		p.last = t
	}
}

// Finish prints the phase's last line unless it was just printed.
func (p *PlainProgress) Finish() {
	if p.printed != p.done {
		p.line()
	}
}

func (p *PlainProgress) line() {
	pct := 100
	if p.total > 0 {
		pct = int(int64(p.done) * 100 / int64(p.total))
	}
	unit := unitOf(p.phase)
	if unit != "" {
		unit = " " + unit
	}
	fmt.Fprintf(p.W, "%s: %s %d%% (%d/%d%s)\n", p.study, p.phase, pct, p.done, p.total, unit)
	p.printed = p.done
}

// unitOf names what a phase counts.
func unitOf(phase string) string {
	switch phase {
	case "solving":
		return "cases"
	case "tornado", "sobol":
		return "solves"
	}
	return ""
}

// BarProgress draws a plain ASCII progress bar per phase on W, a
// terminal. Calls must come from one goroutine.
type BarProgress struct {
	W   io.Writer
	bar *progressbar.ProgressBar

	total, done int
}

var _ batch.Progress = (*BarProgress)(nil)

// Start begins a bar for the phase; a phase of no units gets none.
func (p *BarProgress) Start(study, phase string, total int) {
	p.end()
	p.total, p.done = total, 0
	if total <= 0 {
		return
	}
	w := p.W
	p.bar = progressbar.NewOptions64(int64(total),
		progressbar.OptionSetWriter(w),
		progressbar.OptionSetDescription(study+": "+phase),
		progressbar.OptionSetTheme(progressbar.ThemeASCII),
		progressbar.OptionSetWidth(30),
		progressbar.OptionThrottle(100*time.Millisecond),
		progressbar.OptionShowCount(),
		progressbar.OptionSetElapsedTime(true),
		progressbar.OptionSetPredictTime(true),
		progressbar.OptionOnCompletion(func() { fmt.Fprintln(w) }),
	)
}

// Add advances the bar.
func (p *BarProgress) Add(n int) {
	p.done += n
	if p.bar != nil && p.done <= p.total {
		_ = p.bar.Add(n) // a display error must not stop a run
	}
}

// Finish ends the bar's line. A phase that stopped short (an interrupted
// run) keeps the bar where it was.
func (p *BarProgress) Finish() { p.end() }

func (p *BarProgress) end() {
	if p.bar == nil {
		return
	}
	if p.done >= p.total {
		_ = p.bar.Finish()
	} else {
		_ = p.bar.Exit()
	}
	p.bar = nil
}
