package engine

import "io"

// TEMPORARY stand-ins for the curve types being written on the curves
// branch; removed when it merges.

type Table struct{ name string }

func (t *Table) Name() string                                  { return t.name }
func (t *Table) EndPoints() (s1r, s2r, kr1max, kr2max float64) { return 0, 0, 1, 1 }

type LET struct {
	S1r, S2r, Kr1Max, Kr2Max float64
	L1, E1, T1, L2, E2, T2   float64
}

func (c *LET) Eval(s float64) RelPermValue   { panic("stub") }
func (c *LET) Residuals() (s1r, s2r float64) { return c.S1r, c.S2r }

type ScaledTable struct {
	T                        *Table
	S1r, S2r, Kr1Max, Kr2Max float64
}

func (c *ScaledTable) Eval(s float64) RelPermValue   { panic("stub") }
func (c *ScaledTable) Residuals() (s1r, s2r float64) { return c.S1r, c.S2r }

type TableError struct {
	File         string
	Line, Column int
	Field, Msg   string
}

func (e *TableError) Error() string { return e.Msg }

type TableErrors []*TableError

func (l TableErrors) Error() string { return "" }

func ReadTables(r io.Reader, file string) ([]*Table, error) { return nil, nil }
