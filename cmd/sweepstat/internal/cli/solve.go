package cli

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/studies"
)

// SolveOptions are the inputs of `sweepstat solve`.
type SolveOptions struct {
	IO       *IOStreams
	Set      []string  // name=value overrides of engine.DefaultParams, in order given
	PVI      []float64 // checkpoints, pore volumes injected
	CutLimit float64
	JSON     bool
	Relperm  string // corey, let or table
	Table    string // the CSV file of measured curves, for table
}

// NewCmdSolve builds `sweepstat solve`. With a nil runF it runs
// [SolveRun].
func NewCmdSolve(f *Factory, runF func(*SolveOptions) error) *cobra.Command {
	opts := &SolveOptions{IO: f.IO}
	cmd := &cobra.Command{
		Use:   "solve [--set NAME=VALUE]...",
		Short: "Solve one deterministic case",
		Long: `Solve one displacement case exactly and print the parameters used, every
output column with its unit, the case status and the pieces of the solution
(shocks and rarefaction fans, with their saturation ranges and speeds).

Parameters not given with --set keep the defaults below. An unknown name, a
value that is not a number, or a combination that breaks a validity rule is
an error (exit 2). --json prints one JSON object instead of tables, with
null for values that are not finite.

--relperm let uses the LET curves (let_l1 … let_t2 in place of n1 and n2);
--table FILE.csv the measured curves of FILE (columns s, kr1, kr2 and
optionally sample), rock_sample picking the sample, re-scaled to the s1r,
s2r, kr1_max and kr2_max given with --set and otherwise at the sample's own.

Parameters (name, default, unit):
` + paramHelp(),
		Example: `  sweepstat solve
  sweepstat solve --set mu2_cp=5 --set n1=3 --set s2r=0.2
  sweepstat solve --set dip_deg=10 --set rho1=1040 --set rho2=860 --pvi 0.5,1,2
  sweepstat solve --set mu1_cp=0.5 --json
  sweepstat solve --relperm let --set let_l1=2.5 --set let_t1=1.2
  sweepstat solve --table core-curves.csv --set rock_sample=2`,
		Args: usageArgs(cobra.NoArgs),
		RunE: func(cmd *cobra.Command, args []string) error {
			if runF != nil {
				return runF(opts)
			}
			return SolveRun(opts)
		},
	}
	fl := cmd.Flags()
	fl.StringArrayVar(&opts.Set, "set", nil, "set parameter `NAME=VALUE` (repeatable)")
	opts.PVI = studies.DefaultPVI()
	fl.Var(&floatList{p: &opts.PVI}, "pvi", "checkpoints in pore volumes injected, increasing")
	fl.Float64Var(&opts.CutLimit, "cut-limit", studies.DefaultCutLimit, "outlet phase-1 cut for pvi_at_cut_limit, in (0, 1]")
	fl.BoolVar(&opts.JSON, "json", false, "print a JSON object")
	fl.StringVar(&opts.Relperm, "relperm", "corey", "relative-permeability model: corey, let or table")
	fl.StringVar(&opts.Table, "table", "", "CSV `FILE` of measured curves (implies --relperm table)")
	return cmd
}

// paramHelp lists every engine parameter with its default and unit.
func paramHelp() string {
	var b strings.Builder
	tw := tabwriter.NewWriter(&b, 0, 4, 2, ' ', 0)
	def := engine.DefaultParams()
	for p := engine.Param(0); p < engine.NumParams; p++ {
		if p >= engine.LengthM {
			break // the dimensions belong to a study's volumes section
		}
		fmt.Fprintf(tw, "  %s\t%s\t%s\n", p, num(def[p]), p.Unit())
	}
	tw.Flush()
	return b.String()
}

func paramNames() string {
	names := make([]string, engine.NumParams)
	for p := engine.Param(0); p < engine.NumParams; p++ {
		names[p] = p.String()
	}
	return strings.Join(names, ", ")
}

// SolveParams returns engine.DefaultParams with the NAME=VALUE overrides
// of set applied, or an *InputError naming the bad entry. A name given
// twice is an error.
func SolveParams(set []string) (engine.Params, error) {
	p := engine.DefaultParams()
	seen := map[engine.Param]bool{}
	for _, kv := range set {
		name, val, ok := strings.Cut(kv, "=")
		name, val = strings.TrimSpace(name), strings.TrimSpace(val)
		if !ok || name == "" {
			return p, badInput("--set %q: want NAME=VALUE", kv)
		}
		q, ok := engine.ParamByName(name)
		if !ok {
			return p, badInput("--set %s: unknown parameter %q (known: %s)", kv, name, paramNames())
		}
		if seen[q] {
			return p, badInput("--set %s: %s is set twice", kv, name)
		}
		seen[q] = true
		v, err := strconv.ParseFloat(val, 64)
		if err != nil {
			return p, badInput("--set %s: %q is not a number", kv, val)
		}
		p[q] = v
	}
	return p, nil
}

func checkCheckpoints(pvi []float64, cutLimit float64) error {
	if len(pvi) > studies.MaxCheckpoints {
		return badInput("--pvi: at most %d checkpoints, not %d", studies.MaxCheckpoints, len(pvi))
	}
	for i, x := range pvi {
		if !(x > 0) || math.IsInf(x, 0) {
			return badInput("--pvi: %v is not a positive finite number", x)
		}
		if i > 0 && !(x > pvi[i-1]) {
			return badInput("--pvi: checkpoints must increase (%v after %v)", x, pvi[i-1])
		}
	}
	if !(cutLimit > 0 && cutLimit <= 1) {
		return badInput("--cut-limit: %v is not in (0, 1]", cutLimit)
	}
	return nil
}

// SolveRun solves the case of opts and prints it as tables or JSON.
func SolveRun(opts *SolveOptions) error {
	p, err := SolveParams(opts.Set)
	if err != nil {
		return err
	}
	if err := checkCheckpoints(opts.PVI, opts.CutLimit); err != nil {
		return err
	}
	m, err := solveModel(opts)
	if err != nil {
		return err
	}
	for _, kv := range opts.Set {
		name, _, _ := strings.Cut(kv, "=")
		q, _ := engine.ParamByName(strings.TrimSpace(name))
		if !m.Uses(q) {
			return badInput("--set %s: the %s model does not read %s", kv, m.Family, q)
		}
		for i, e := range [4]engine.Param{engine.S1r, engine.S2r, engine.Kr1Max, engine.Kr2Max} {
			if q == e {
				m.TableEnds[i] = false
			}
		}
	}
	m.Resolve(&p)
	if err := m.Validate(&p); err != nil {
		return fmt.Errorf("invalid parameters: %w", err)
	}
	s := engine.Solver{Model: m}
	var r engine.Result
	s.SolveCase(&p, opts.PVI, opts.CutLimit, &r)
	sol, err := engine.SolveModel(m, p)
	if err != nil { // Validate passed, so this is not expected
		return fmt.Errorf("solving: %w", err)
	}
	if opts.JSON {
		return writeSolveJSON(opts.IO.Out, m, &p, opts.PVI, &r, sol.Pieces())
	}
	return writeSolveTable(opts.IO.Out, m, &p, opts.PVI, &r, sol.Pieces())
}

// solveModel returns the model of --relperm and --table.
func solveModel(opts *SolveOptions) (*engine.Model, error) {
	name := opts.Relperm
	if opts.Table != "" {
		if name != "corey" && name != "table" {
			return nil, badInput("--table reads measured curves: it goes with --relperm table, not %s", name)
		}
		name = "table"
	}
	fam, ok := engine.FamilyByName(name)
	if !ok {
		return nil, badInput("--relperm %q: want corey, let or table", name)
	}
	m := &engine.Model{Family: fam}
	if fam != engine.FamilyTable {
		return m, nil
	}
	if opts.Table == "" {
		return nil, badInput("--relperm table needs --table FILE.csv")
	}
	f, err := os.Open(opts.Table)
	if err != nil {
		return nil, badInput("--table: %v", err)
	}
	defer f.Close()
	m.Tables, err = engine.ReadTables(f, opts.Table)
	if err != nil {
		return nil, badInput("%v", err)
	}
	m.TableEnds = [4]bool{true, true, true, true}
	return m, nil
}

func writeSolveTable(w io.Writer, m *engine.Model, p *engine.Params, pvi []float64, r *engine.Result, pieces []engine.Piece) error {
	tw := tabwriter.NewWriter(w, 0, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "PARAMETER\tVALUE\tUNIT")
	for _, q := range m.Params() {
		fmt.Fprintf(tw, "%s\t%s\t%s\n", q, num(p[q]), q.Unit())
	}
	fmt.Fprintln(tw, "\t\t")
	fmt.Fprintln(tw, "OUTPUT\tVALUE\tUNIT")
	for _, o := range m.Outputs(pvi) {
		fmt.Fprintf(tw, "%s\t%s\t%s\n", o.Name, num6(o.Get(r)), o.Unit)
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	fmt.Fprintf(w, "\nstatus: %s\n", r.StatusText())
	if len(pieces) == 0 {
		return nil
	}
	fmt.Fprintln(w, "\nsolution pieces, from the initial state (ahead) to the inlet state (behind):")
	tw = tabwriter.NewWriter(w, 0, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "PIECE\tKIND\tS FROM\tS TO\tF FROM\tF TO\tSPEED FROM\tSPEED TO")
	for i, pc := range pieces {
		fmt.Fprintf(tw, "%d\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n", i+1, pieceKind(pc),
			num6(pc.Lo), num6(pc.Hi), num6(pc.FLo), num6(pc.FHi), num6(pc.SpeedLo), num6(pc.SpeedHi))
	}
	return tw.Flush()
}

func pieceKind(pc engine.Piece) string {
	if pc.Shock {
		return "shock"
	}
	return "fan"
}

// floatList is a comma-separated list flag of numbers that prints them
// the shortest way. The first use of the flag replaces the default, later
// uses append.
type floatList struct {
	p       *[]float64
	changed bool
}

func (l *floatList) String() string {
	if l.p == nil {
		return ""
	}
	parts := make([]string, len(*l.p))
	for i, x := range *l.p {
		parts[i] = num(x)
	}
	return strings.Join(parts, ",")
}

func (l *floatList) Set(s string) error {
	var xs []float64
	for _, part := range strings.Split(s, ",") {
		x, err := strconv.ParseFloat(strings.TrimSpace(part), 64)
		if err != nil {
			return fmt.Errorf("%q is not a number", part)
		}
		xs = append(xs, x)
	}
	if !l.changed {
		*l.p = nil
		l.changed = true
	}
	*l.p = append(*l.p, xs...)
	return nil
}

func (l *floatList) Type() string { return "numbers" }

// num formats x the shortest way that reads back to it.
func num(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

// num6 formats x to six significant digits.
func num6(x float64) string { return strconv.FormatFloat(x, 'g', 6, 64) }

// jsonNumber is a float64 that marshals as null when it is not finite.
type jsonNumber float64

func (x jsonNumber) MarshalJSON() ([]byte, error) {
	f := float64(x)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return json.Marshal(f)
}

// orderedNumbers marshals as a JSON object with its keys in slice order.
type orderedNumbers []namedNumber

type namedNumber struct {
	Name  string
	Value jsonNumber
}

func (o orderedNumbers) MarshalJSON() ([]byte, error) {
	var b bytes.Buffer
	b.WriteByte('{')
	for i, kv := range o {
		if i > 0 {
			b.WriteByte(',')
		}
		k, err := json.Marshal(kv.Name)
		if err != nil {
			return nil, err
		}
		v, err := kv.Value.MarshalJSON()
		if err != nil {
			return nil, err
		}
		b.Write(k)
		b.WriteByte(':')
		b.Write(v)
	}
	b.WriteByte('}')
	return b.Bytes(), nil
}

// solveJSON is the object `solve --json` prints. Parameters and Outputs
// keep the order of engine.Param and engine.Outputs.
type solveJSON struct {
	Parameters orderedNumbers `json:"parameters"`
	Outputs    orderedNumbers `json:"outputs"`
	Status     string         `json:"status"`
	Pieces     []pieceJSON    `json:"pieces"`
}

// pieceJSON is one piece of the solution in `solve --json`.
type pieceJSON struct {
	Kind    string     `json:"kind"` // "shock" or "fan"
	SLo     jsonNumber `json:"s_lo"`
	SHi     jsonNumber `json:"s_hi"`
	FLo     jsonNumber `json:"f_lo"`
	FHi     jsonNumber `json:"f_hi"`
	SpeedLo jsonNumber `json:"speed_lo"`
	SpeedHi jsonNumber `json:"speed_hi"`
}

func writeSolveJSON(w io.Writer, m *engine.Model, p *engine.Params, pvi []float64, r *engine.Result, pieces []engine.Piece) error {
	out := solveJSON{Status: r.StatusText(), Pieces: []pieceJSON{}}
	for _, q := range m.Params() {
		out.Parameters = append(out.Parameters, namedNumber{q.String(), jsonNumber(p[q])})
	}
	for _, o := range m.Outputs(pvi) {
		out.Outputs = append(out.Outputs, namedNumber{o.Name, jsonNumber(o.Get(r))})
	}
	for _, pc := range pieces {
		out.Pieces = append(out.Pieces, pieceJSON{
			Kind: pieceKind(pc),
			SLo:  jsonNumber(pc.Lo), SHi: jsonNumber(pc.Hi),
			FLo: jsonNumber(pc.FLo), FHi: jsonNumber(pc.FHi),
			SpeedLo: jsonNumber(pc.SpeedLo), SpeedHi: jsonNumber(pc.SpeedHi),
		})
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(out)
}
