package studies

import (
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"

	"go.yaml.in/yaml/v3"

	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/sampler"
)

// Relperm holds the `relperm` section: which relative-permeability
// model the cases use and, for measured curves, where they are.
type Relperm struct {
	// Model is the family: corey (the default), let or table.
	Model engine.Family
	// Table is the CSV file of measured curves as the study names it
	// (relative to the study file's folder), for the table model.
	Table string
	// TablePath is the file actually read, and TableData its bytes; a run
	// keeps a copy beside its outputs.
	TablePath string
	TableData []byte
	// Samples are the rock samples of the table, in file order:
	// rock_sample k is Samples[k−1].
	Samples []*engine.Table
}

// VolumeSettings holds the non-parameter keys of the `volumes` section.
type VolumeSettings struct {
	// Given is true when the study has a volumes section.
	Given bool
	// Schedule is rate_schedule: [[from_day, m3_per_day], …], nil for
	// the constant rate_m3_per_day.
	Schedule []engine.RateStep
	// FieldUnits adds produced volumes in barrels.
	FieldUnits bool
}

// The keys of the relperm and volumes sections, and the parameters that
// belong to the volumes section instead of parameters.
var (
	relpermKeys  = []string{"model", "table"}
	familyNames  = engine.FamilyNames()
	volumeParams = []engine.Param{engine.LengthM, engine.AreaM2, engine.WidthM, engine.ThicknessM, engine.Porosity, engine.B2, engine.RateM3PerDay}
	volumeKeys   = []string{"rate_schedule", "field_units"}
)

// MaxScheduleSteps is the most steps a rate_schedule may have.
const MaxScheduleSteps = 10_000

// isVolumeParam reports whether q is given in the volumes section.
func isVolumeParam(q engine.Param) bool {
	for _, v := range volumeParams {
		if v == q {
			return true
		}
	}
	return false
}

// paramPath returns the key path of parameter q in a study file:
// volumes.<name> for the dimensions, parameters.<name> for the rest.
func paramPath(q engine.Param) string {
	if isVolumeParam(q) {
		return "volumes." + q.String()
	}
	return "parameters." + q.String()
}

// TableReader reads the measured-curve file a study names. The default,
// used by [Parse] and [Load], reads path relative to the study file's
// folder; a caller that keeps the study elsewhere (a run folder) passes
// its own through [ParseOptions].
type TableReader func(name string) (path string, data []byte, err error)

// ParseOptions adjusts [ParseWith].
type ParseOptions struct {
	// ReadTable reads relperm.table; nil reads it relative to the
	// study file's folder.
	ReadTable TableReader
}

func defaultTableReader(studyFile string) TableReader {
	return func(name string) (string, []byte, error) {
		path := name
		if !filepath.IsAbs(path) {
			path = filepath.Join(filepath.Dir(studyFile), name)
		}
		f, err := os.Open(path)
		if err != nil {
			return path, nil, err
		}
		defer f.Close()
		if fi, err := f.Stat(); err != nil {
			return path, nil, err
		} else if !fi.Mode().IsRegular() {
			return path, nil, fmt.Errorf("not a regular file")
		}
		// One byte more than allowed tells a file that is too large.
		data, err := io.ReadAll(io.LimitReader(f, MaxFileSize+1))
		return path, data, err
	}
}

// relperm decodes the relperm section and reads the table it names.
func (p *parser) relperm(n *yaml.Node, r *Relperm) {
	es, ok := p.mapping(n, "relperm", "a mapping with model (corey, let or table) and, for table, table: FILE.csv")
	if !ok {
		return
	}
	m := p.known(es, "relperm", relpermKeys, "key")
	if e, ok := m["model"]; ok {
		if v, ok := p.choice(e.val, "relperm.model", familyNames); ok {
			r.Model, _ = engine.FamilyByName(v)
		}
	}
	e, hasTable := m["table"]
	switch {
	case r.Model != engine.FamilyTable && hasTable:
		p.errorf(e.key, "relperm.table", ErrUnknownKey, "table is read only with model: table (this study's model is %s)", r.Model)
		return
	case r.Model != engine.FamilyTable:
		return
	case !hasTable:
		p.errorf(n, "relperm.table", ErrMissing, "model: table needs table: FILE.csv (columns s, kr1, kr2 and optionally sample)")
		return
	}
	name, ok := p.text(e.val, "relperm.table", "a CSV file name")
	if !ok {
		return
	}
	if name == "" {
		p.errorf(e.val, "relperm.table", ErrValue, "must not be empty")
		return
	}
	r.Table = name
	read := p.readTable
	if read == nil {
		read = defaultTableReader(p.file)
	}
	path, data, err := read(name)
	if err != nil {
		p.errorf(e.val, "relperm.table", ErrValue, "cannot read %s: %v", name, unwrapPathError(err))
		return
	}
	if len(data) > MaxFileSize {
		p.errorf(e.val, "relperm.table", ErrValue, "%s is larger than %d bytes", name, MaxFileSize)
		return
	}
	samples, err := engine.ReadTables(strings.NewReader(string(data)), path)
	if err != nil {
		var list engine.TableErrors
		var one *engine.TableError
		switch {
		case errors.As(err, &list):
			for _, te := range list {
				p.tableError(te)
			}
		case errors.As(err, &one):
			p.tableError(one)
		default:
			p.errorf(e.val, "relperm.table", ErrValue, "%s: %v", name, err)
		}
		return
	}
	r.TablePath, r.TableData, r.Samples = path, data, samples
}

// tableError records an error found in the table file, at its place in
// that file.
func (p *parser) tableError(te *engine.TableError) {
	path := "relperm.table"
	if te.Field != "" {
		path += ": " + te.Field
	}
	if len(p.errs) >= collectErrors {
		p.dropped++
		return
	}
	p.errs.Add(&Error{File: te.File, Line: te.Line, Column: te.Column, Path: path, Err: ErrValue, Msg: te.Msg})
}

func unwrapPathError(err error) error {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

// volumes decodes the volumes section's own keys (rate_schedule,
// field_units); its parameters are decoded with the others.
func (p *parser) volumes(mp *modelParams, v *VolumeSettings) {
	v.Given = true
	for _, e := range mp.volEntries {
		switch e.name {
		case "field_units":
			if e.val.Kind != yaml.ScalarNode || e.val.ShortTag() != "!!bool" {
				p.errorf(e.val, "volumes.field_units", ErrType, "want true or false, got %s", describe(e.val))
				continue
			}
			v.FieldUnits = e.val.Value == "true"
		case "rate_schedule":
			v.Schedule = p.schedule(e.val)
		}
	}
}

// schedule decodes rate_schedule: a list of [from_day, m3_per_day] pairs,
// the first from day 0, days strictly increasing, rates ≥ 0 and the last
// rate positive.
func (p *parser) schedule(n *yaml.Node) []engine.RateStep {
	const path = "volumes.rate_schedule"
	const want = "a list of [from_day, m3_per_day] pairs, e.g. [[0, 400], [180, 650]]"
	if n.Kind != yaml.SequenceNode || len(n.Content) == 0 {
		p.errorf(n, path, ErrType, "want %s, got %s", want, describe(n))
		return nil
	}
	if len(n.Content) > MaxScheduleSteps {
		p.errorf(n, path, ErrValue, "has %d steps; at most %d", len(n.Content), MaxScheduleSteps)
		return nil
	}
	steps := make([]engine.RateStep, 0, len(n.Content))
	good := true
	for i, c := range n.Content {
		c = deref(c)
		ip := indexPath(path, i)
		if c.Kind != yaml.SequenceNode || len(c.Content) != 2 {
			p.errorf(c, ip, ErrType, "want [from_day, m3_per_day], got %s", describe(c))
			good = false
			continue
		}
		day, ok1 := p.number(deref(c.Content[0]), indexPath(ip, 0))
		rate, ok2 := p.number(deref(c.Content[1]), indexPath(ip, 1))
		if !ok1 || !ok2 {
			good = false
			continue
		}
		switch {
		case i == 0 && day != 0:
			p.errorf(c.Content[0], indexPath(ip, 0), ErrValue, "the schedule starts at day 0, got %v", day)
			good = false
		case i > 0 && len(steps) == i && !(day > steps[i-1].FromDay):
			p.errorf(c.Content[0], indexPath(ip, 0), ErrValue, "days must increase: %v follows %v", day, steps[i-1].FromDay)
			good = false
		case rate < 0:
			p.errorf(c.Content[1], indexPath(ip, 1), ErrValue, "a rate must be ≥ 0, got %v", rate)
			good = false
		case i == len(n.Content)-1 && rate <= 0:
			p.errorf(c.Content[1], indexPath(ip, 1), ErrValue, "the last rate holds forever, so it must be > 0, got %v", rate)
			good = false
		}
		steps = append(steps, engine.RateStep{FromDay: day, M3PerDay: rate})
	}
	if !good {
		return nil
	}
	return steps
}

// model returns the engine model of a study whose parameters are ps
// and whose volumes schedule is schedule.
func (mp *modelParams) model(ps *paramSet, v *VolumeSettings) *engine.Model {
	m := &engine.Model{Family: mp.family, Tables: mp.tables}
	if m.Family == engine.FamilyTable {
		for i, q := range [4]engine.Param{engine.S1r, engine.S2r, engine.Kr1Max, engine.Kr2Max} {
			m.TableEnds[i] = ps == nil || ps.given[q] == nil
		}
	}
	if mp.volumes != nil {
		vol := &engine.Volumes{}
		if v != nil {
			vol.Schedule, vol.FieldUnits = v.Schedule, v.FieldUnits
		} else if mp.hasSchedule {
			vol.Schedule = []engine.RateStep{{FromDay: 0, M3PerDay: 1}} // stands in for the checks
		}
		if ps != nil {
			vol.AreaFromWidth = ps.given[engine.AreaM2] == nil
			vol.VelocityFromRate = ps.given[engine.VelocityMPerDay] == nil && vol.Schedule == nil
		}
		m.Volumes = vol
	}
	return m
}

// Model returns the engine model of the study's cases: the
// relative-permeability family with its rock samples, and the volumes
// section. The same pointer is returned on every call.
func (s *Study) Model() *engine.Model { return s.model }

// rockSampleRule checks that a table study's rock_sample can only take
// positions in the table.
func (p *parser) rockSampleRule(ps *paramSet, n int) {
	par := ps.given[engine.RockSample]
	sp, ok := ps.spec(engine.RockSample)
	if par == nil || !ok {
		return
	}
	bad := func(format string, args ...any) {
		p.errAt(par.ValuePos, paramPath(engine.RockSample), ErrValue, format, args...)
	}
	names := sampleList(n)
	switch {
	case sp.Kind == sampler.Fixed:
		if v := sp.Value; v < 1 || v > float64(n) || v != math.Trunc(v) {
			bad("rock_sample %v is not a sample of the table: it has %s", v, names)
		}
	case sp.Kind == sampler.Discrete:
		for i, v := range sp.Values {
			if v < 1 || v > float64(n) || v != math.Trunc(v) {
				p.errAt(par.FieldPos(fmt.Sprintf("values[%d]", i)), paramPath(engine.RockSample)+fmt.Sprintf(".values[%d]", i), ErrValue,
					"rock_sample %v is not a sample of the table: it has %s", v, names)
			}
		}
	default:
		bad("rock_sample picks a sample of the table: give a whole number from 1 to %d or {dist: discrete, values: […]}", n)
	}
}

func sampleList(n int) string {
	if n == 1 {
		return "one sample (1)"
	}
	return fmt.Sprintf("samples 1 to %d", n)
}
