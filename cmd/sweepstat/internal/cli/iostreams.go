package cli

import (
	"bytes"
	"io"
	"os"

	"golang.org/x/term"
)

// IOStreams are the standard streams of a command. Data goes to Out;
// progress, summaries and diagnostics go to ErrOut.
type IOStreams struct {
	In     io.Reader
	Out    io.Writer
	ErrOut io.Writer
	// IsTerminal reports whether ErrOut is an interactive terminal; it
	// selects a progress bar over periodic plain lines.
	IsTerminal bool
}

// System returns the process's standard streams, with IsTerminal set from
// whether stderr is a terminal.
func System() *IOStreams {
	return &IOStreams{
		In:         os.Stdin,
		Out:        os.Stdout,
		ErrOut:     os.Stderr,
		IsTerminal: term.IsTerminal(int(os.Stderr.Fd())),
	}
}

// Test returns streams backed by buffers, not a terminal, and the buffers
// for stdin, stdout and stderr.
func Test() (ios *IOStreams, in, out, errOut *bytes.Buffer) {
	in, out, errOut = new(bytes.Buffer), new(bytes.Buffer), new(bytes.Buffer)
	return &IOStreams{In: in, Out: out, ErrOut: errOut}, in, out, errOut
}
