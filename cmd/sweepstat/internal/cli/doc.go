// Package cli is the command line of sweepstat: a thin cobra tree over the
// studies, engine and batch packages. Nothing here computes physics.
//
// Every verb is an options struct, a NewCmdX(f, runF) constructor that
// fills the options from flags and arguments, and an xRun(opts) function
// that does the work. A nil runF means xRun; tests pass their own to
// capture the parsed options. Input, output, version, clock and the batch
// entry points come in through a [Factory], so a test runs whole commands
// against [Test] streams and fake runners, with no package-level state.
//
// Exit codes ([ExitCode]): 0 success, 1 run failure (including an
// interrupted run), 2 bad input or usage: flag and argument errors, study
// file errors (every positioned error is printed, one per line), invalid
// solve parameters, and an existing output folder without --force. Every
// other error is printed once to stderr as "sweepstat: <message>".
package cli
