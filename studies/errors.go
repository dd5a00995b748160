package studies

import (
	"errors"
	"fmt"
	"slices"
	"strconv"
	"strings"
)

// The causes of study errors. Every [*Error] carries one of them in Err (or,
// for [Load], the error that stopped the file from being read), so that
// errors.Is(err, studies.ErrUnknownKey) works on an [ErrorList] too.
var (
	// ErrSyntax: the file is not well-formed YAML, is empty of text that
	// could be YAML (binary data, invalid UTF-8) or holds more than one
	// YAML document.
	ErrSyntax = errors.New("syntax error")
	// ErrUnknownKey: a mapping key the schema does not know at that level,
	// including an unknown parameter name used as a key and a field that the
	// distribution does not take.
	ErrUnknownKey = errors.New("unknown key")
	// ErrDuplicateKey: a key given twice in one mapping, or a correlation
	// pair given twice.
	ErrDuplicateKey = errors.New("duplicate key")
	// ErrType: a value of the wrong kind, such as text where a number is
	// wanted or a list where a mapping is wanted.
	ErrType = errors.New("wrong type")
	// ErrMissing: a required key, parameter, field or value is absent
	// (a key with an empty value counts as absent), or the file is empty.
	ErrMissing = errors.New("missing value")
	// ErrValue: a value of the right type outside its allowed range,
	// including the validity rules of DESIGN §2 applied to fixed values and
	// to distribution ranges that can never give a valid case.
	ErrValue = errors.New("invalid value")
	// ErrCycle: same_as references that form a cycle.
	ErrCycle = errors.New("same_as cycle")
	// ErrUnknownName: a value that names something unknown — a parameter
	// in same_as or correlations, or a distribution after dist:.
	ErrUnknownName = errors.New("unknown name")
)

// Pos is a position in a study file. Line and Column count from 1; Column
// counts characters (Unicode code points), as the YAML parser does. A zero
// Column means the column is unknown; a zero Line means the position is
// unknown.
type Pos struct {
	Line, Column int
}

// IsValid reports whether the position is known.
func (p Pos) IsValid() bool { return p.Line > 0 }

// String returns "line:column", "line" when the column is unknown, or "-"
// when the position is unknown.
func (p Pos) String() string {
	switch {
	case p.Line <= 0:
		return "-"
	case p.Column <= 0:
		return strconv.Itoa(p.Line)
	}
	return strconv.Itoa(p.Line) + ":" + strconv.Itoa(p.Column)
}

// Error is one problem in a study file: where it is, which key it is
// about, a sentinel cause and a human-readable message.
//
// It prints as
//
//	file:line:col: key.path: message
//
// leaving out the column when it is unknown (0), the line and column when
// the line is unknown, the file when File is empty and the key path when
// Path is empty. Path names the value the way the file nests it, with
// dots between mapping keys and [i] for list items (0-based):
// "parameters.s2r.mode", "correlations[0][2]", "report.pvi[1]". A key that
// is not a plain name is quoted, as by strconv.Quote.
type Error struct {
	File   string
	Line   int
	Column int
	Path   string
	Err    error  // sentinel cause, see [ErrSyntax] and the others
	Msg    string // the message printed; Err's text when empty
}

// Pos returns the error's position.
func (e *Error) Pos() Pos { return Pos{Line: e.Line, Column: e.Column} }

func (e *Error) Error() string {
	var b strings.Builder
	if e.File != "" {
		b.WriteString(e.File)
		b.WriteString(":")
	}
	if e.Line > 0 {
		b.WriteString(e.Pos().String())
		b.WriteString(":")
	}
	if b.Len() > 0 {
		b.WriteString(" ")
	}
	if e.Path != "" {
		b.WriteString(e.Path)
		b.WriteString(": ")
	}
	switch {
	case e.Msg != "":
		b.WriteString(e.Msg)
	case e.Err != nil:
		b.WriteString(e.Err.Error())
	default:
		b.WriteString("error")
	}
	return b.String()
}

// Unwrap returns the cause.
func (e *Error) Unwrap() error { return e.Err }

// ErrorList is a list of study errors. [Parse] and [Load] return one,
// sorted by position, holding every problem they found. The zero value is
// an empty list, ready to use.
type ErrorList []*Error

// Add appends an error.
func (l *ErrorList) Add(e *Error) { *l = append(*l, e) }

// Len returns the number of errors.
func (l ErrorList) Len() int { return len(l) }

// Sort sorts the list by file, line, column and then key path, keeping
// the order of errors at the same place. Unknown positions sort first.
func (l ErrorList) Sort() {
	slices.SortStableFunc(l, func(a, b *Error) int {
		if c := strings.Compare(a.File, b.File); c != 0 {
			return c
		}
		if a.Line != b.Line {
			return a.Line - b.Line
		}
		if a.Column != b.Column {
			return a.Column - b.Column
		}
		return strings.Compare(a.Path, b.Path)
	})
}

// Error returns the first error's text and how many more there are. Print
// every entry to show the whole list, one per line.
func (l ErrorList) Error() string {
	switch len(l) {
	case 0:
		return "no errors"
	case 1:
		return l[0].Error()
	case 2:
		return fmt.Sprintf("%s (and 1 more error)", l[0])
	}
	return fmt.Sprintf("%s (and %d more errors)", l[0], len(l)-1)
}

// Unwrap returns the entries, so that errors.Is and errors.As look at
// each of them.
func (l ErrorList) Unwrap() []error {
	errs := make([]error, len(l))
	for i, e := range l {
		errs[i] = e
	}
	return errs
}

// Err returns nil if the list is empty and the list itself otherwise.
func (l ErrorList) Err() error {
	if len(l) == 0 {
		return nil
	}
	return l
}
