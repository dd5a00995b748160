package cli

import (
	"bytes"
	"strings"
	"testing"
	"time"
)

// Plain lines come at most every PlainInterval of the (fake) clock while
// a phase runs, and once at its end, unless the last Add just printed it.
func TestPlainProgress(t *testing.T) {
	t.Parallel()
	type step struct {
		after  time.Duration // clock advance before the call
		add    int           // units to add; -1 means Finish
		output string        // the line the call must print, "" for none
	}
	tests := []struct {
		name  string
		total int
		steps []step
	}{
		{"every two seconds then the end", 20000, []step{
			{time.Second, 4000, ""},
			{time.Second, 4000, "demo-updip-waterflood: solving 40% (8000/20000 cases)\n"},
			{time.Second, 4000, ""},
			{1500 * time.Millisecond, 4000, "demo-updip-waterflood: solving 80% (16000/20000 cases)\n"},
			{500 * time.Millisecond, 4000, ""},
			{0, -1, "demo-updip-waterflood: solving 100% (20000/20000 cases)\n"},
		}},
		{"no repeat at the end", 10, []step{
			{3 * time.Second, 10, "demo-updip-waterflood: solving 100% (10/10 cases)\n"},
			{0, -1, ""},
		}},
		{"fast phase prints once", 10, []step{
			{time.Millisecond, 5, ""},
			{time.Millisecond, 5, ""},
			{0, -1, "demo-updip-waterflood: solving 100% (10/10 cases)\n"},
		}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			clock := newFakeClock()
			var buf bytes.Buffer
			p := &PlainProgress{W: &buf, Now: clock.Now}
			p.Start("demo-updip-waterflood", "solving", tc.total)
			for i, s := range tc.steps {
				clock.Advance(s.after)
				buf.Reset()
				if s.add < 0 {
					p.Finish()
				} else {
					p.Add(s.add)
				}
				if buf.String() != s.output {
					t.Errorf("step %d: printed %q, want %q", i, buf.String(), s.output)
				}
			}
		})
	}
}

func TestPlainProgressUnits(t *testing.T) {
	t.Parallel()
	var buf bytes.Buffer
	p := &PlainProgress{W: &buf, Now: newFakeClock().Now}
	p.Start("s", "tornado", 4)
	p.Add(1)
	p.Finish()
	p.Start("s", "summaries", 3)
	p.Add(3)
	p.Finish()
	want := "s: tornado 25% (1/4 solves)\ns: summaries 100% (3/3)\n"
	if buf.String() != want {
		t.Errorf("printed %q, want %q", buf.String(), want)
	}
}

func TestNewProgress(t *testing.T) {
	t.Parallel()
	ios, _, _, errOut := Test()
	if p := NewProgress(ios, true, nil); p != nil {
		t.Errorf("quiet: got %T, want nil", p)
	}
	if p, ok := NewProgress(ios, false, nil).(*PlainProgress); !ok || p.W != errOut {
		t.Errorf("not a terminal: got %T, want *PlainProgress on stderr", p)
	}
	ios.IsTerminal = true
	if p, ok := NewProgress(ios, false, nil).(*BarProgress); !ok || p.W != errOut {
		t.Errorf("terminal: got %T, want *BarProgress on stderr", p)
	}
}

// The bar is plain: its text and an ASCII bar, no escape sequences.
func TestBarProgressPlain(t *testing.T) {
	t.Parallel()
	var buf bytes.Buffer
	p := &BarProgress{W: &buf}
	p.Start("demo", "solving", 100)
	p.Add(40)
	p.Add(60)
	p.Finish()
	out := buf.String()
	for _, want := range []string{"demo: solving", "100%", "100/100", "="} {
		if !strings.Contains(out, want) {
			t.Errorf("bar output %q lacks %q", out, want)
		}
	}
	if strings.Contains(out, "\x1b") {
		t.Errorf("bar output has escape sequences: %q", out)
	}
	if !strings.HasSuffix(out, "\n") {
		t.Errorf("bar does not end its line: %q", out)
	}
}
