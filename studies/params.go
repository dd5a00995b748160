package studies

import (
	"fmt"
	"math"
	"strings"

	"go.yaml.in/yaml/v3"

	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/sampler"
)

// paramNames lists the engine's parameter names in engine.Param order.
func paramNames() []string {
	names := make([]string, engine.NumParams)
	for q := engine.Param(0); q < engine.NumParams; q++ {
		names[q] = q.String()
	}
	return names
}

// Fields of each distribution, and the fields of them all.
var (
	distNames   = []string{"uniform", "triangular", "normal", "lognormal", "pert", "discrete"}
	allFields   = []string{"min", "mode", "max", "mean", "sd", "values", "weights"}
	fieldKinds  = map[string]string{"min": "uniform, triangular, pert, normal and lognormal", "mode": "triangular and pert", "max": "uniform, triangular, pert, normal and lognormal", "mean": "normal and lognormal", "sd": "normal and lognormal", "values": "discrete", "weights": "discrete"}
	specFormMsg = "a number, {dist: …} or {same_as: name}"
)

// kindFields returns the fields a distribution takes and those it needs.
func kindFields(k sampler.Kind) (allowed, required []string) {
	switch k {
	case sampler.Uniform:
		return []string{"min", "max"}, []string{"min", "max"}
	case sampler.Triangular, sampler.PERT:
		return []string{"min", "mode", "max"}, []string{"min", "mode", "max"}
	case sampler.Normal, sampler.LogNormal:
		return []string{"mean", "sd", "min", "max"}, []string{"mean", "sd"}
	case sampler.Discrete:
		return []string{"values", "weights"}, []string{"values"}
	}
	return nil, nil
}

// paramSet holds what parameters() learned, for the later checks.
type paramSet struct {
	given    [engine.NumParams]*Parameter
	ok       [engine.NumParams]bool // given and parsed without error
	missing  [engine.NumParams]bool // needed but not given
	root     [engine.NumParams]engine.Param
	resolved [engine.NumParams]bool // ok and, for followers, the chain ends
	// complete is true when the parameters section has no error at all.
	complete bool
}

func (ps *paramSet) list() []Parameter {
	var out []Parameter
	for _, q := range ps.given {
		if q != nil {
			out = append(out, *q)
		}
	}
	return out
}

// spec returns the resolved specification of q: the root's for a
// follower, the default for a parameter not given. It returns false when
// the specification is unknown because of an error.
func (ps *paramSet) spec(q engine.Param) (*sampler.Spec, bool) {
	if ps.given[q] == nil {
		if ps.missing[q] {
			return nil, false
		}
		return &sampler.Spec{Name: q.String(), Kind: sampler.Fixed, Value: Default(q)}, true
	}
	if !ps.resolved[q] {
		return nil, false
	}
	return &ps.given[ps.root[q]].Spec, true
}

// fixed reports whether q is known to take one value, and which.
func (ps *paramSet) fixed(q engine.Param) (float64, bool) {
	sp, ok := ps.spec(q)
	if !ok {
		return 0, false
	}
	return fixedValue(sp)
}

func (ps *paramSet) uncertain() []engine.Param {
	var out []engine.Param
	for q := engine.Param(0); q < engine.NumParams; q++ {
		if _, ok := ps.spec(q); !ok {
			continue
		}
		if _, fixed := ps.fixed(q); !fixed {
			out = append(out, q)
		}
	}
	return out
}

// modelParams is what the parameter checks need to know of the study's
// model before the parameters are read.
type modelParams struct {
	family  engine.Family
	tables  []*engine.Table // the rock samples of a table study
	volumes *yaml.Node      // the volumes section, nil if none
	volKey  *yaml.Node

	// Filled by parameters: the volumes section's own entries and
	// whether it has a rate_schedule.
	volEntries  []entry
	hasSchedule bool
}

// allowedHere reports whether q may be given in the parameters section
// (inParams) or the volumes section under model mp.
func (mp *modelParams) allowed(q engine.Param, inParams bool) bool {
	if isVolumeParam(q) {
		return !inParams
	}
	if !inParams {
		return false
	}
	m := engine.Model{Family: mp.family}
	return m.Uses(q)
}

// notHere explains why parameter q may not be given where it is.
func (mp *modelParams) notHere(q engine.Param, inParams bool) string {
	switch {
	case isVolumeParam(q) && inParams:
		return fmt.Sprintf("%s belongs in the volumes section, with the other dimensions", q)
	case !inParams:
		return fmt.Sprintf("%s belongs in the parameters section; volumes takes %s, rate_schedule and field_units", q, strings.Join(volumeParamNames(), ", "))
	}
	switch q {
	case engine.N1, engine.N2:
		return fmt.Sprintf("%s is a Corey exponent; this study's relperm model is %s", q, mp.family)
	case engine.RockSample:
		return fmt.Sprintf("rock_sample picks a sample of a measured table; this study's relperm model is %s", mp.family)
	}
	return fmt.Sprintf("%s is a LET parameter; this study's relperm model is %s (write relperm: {model: let})", q, mp.family)
}

func volumeParamNames() []string {
	var names []string
	for _, q := range volumeParams {
		names = append(names, q.String())
	}
	return names
}

// required reports whether the study must give q (the volumes rules that
// depend on which keys are given are checked in volumeNeeds).
func (mp *modelParams) required(q engine.Param) bool {
	if isVolumeParam(q) {
		return false
	}
	m := engine.Model{Family: mp.family, Tables: mp.tables}
	return m.Required(q)
}

func (p *parser) parameters(key, n *yaml.Node, mp *modelParams) *paramSet {
	ps := &paramSet{}
	before := len(p.errs)
	defer func() { ps.complete = len(p.errs) == before }()
	es, ok := p.mapping(n, "parameters", "a mapping of parameter names to "+specFormMsg)
	if !ok {
		for q := engine.Param(0); q < engine.NumParams; q++ {
			ps.missing[q] = mp.required(q)
		}
		return ps
	}
	names := paramNames()
	var here []string // the names the parameters section takes
	for q := engine.Param(0); q < engine.NumParams; q++ {
		if mp.allowed(q, true) {
			here = append(here, q.String())
		}
	}
	// A parameter of another model or section gets its own message.
	keep := es[:0:0]
	for _, e := range es {
		if q, isParam := engine.ParamByName(e.name); isParam && !mp.allowed(q, true) {
			p.errorf(e.key, "parameters."+e.name, ErrUnknownKey, "%s", mp.notHere(q, true))
			continue
		}
		keep = append(keep, e)
	}
	m := p.known(keep, "parameters", here, "parameter")
	if mp.volumes != nil {
		vs, ok := p.mapping(mp.volumes, "volumes", "a mapping of "+strings.Join(append(volumeParamNames(), volumeKeys...), ", "))
		if ok {
			var vkeep []entry
			for _, e := range vs {
				if q, isParam := engine.ParamByName(e.name); isParam && !mp.allowed(q, false) {
					p.errorf(e.key, "volumes."+e.name, ErrUnknownKey, "%s", mp.notHere(q, false))
					continue
				}
				vkeep = append(vkeep, e)
			}
			for name, e := range p.known(vkeep, "volumes", append(volumeParamNames(), volumeKeys...), "key") {
				if _, isParam := engine.ParamByName(name); isParam {
					m[name] = e
					continue
				}
				mp.volEntries = append(mp.volEntries, e)
				mp.hasSchedule = mp.hasSchedule || name == "rate_schedule"
			}
		}
	}
	for q := engine.Param(0); q < engine.NumParams; q++ {
		e, given := m[q.String()]
		if !given {
			if mp.required(q) {
				ps.missing[q] = true
				hint := ""
				for _, u := range es {
					if _, ok := m[u.name]; !ok && suggest(u.name, names) == q.String() {
						hint = fmt.Sprintf(" (is %s at line %d meant to be %s?)", quoteShort(u.name), u.key.Line, q)
						break
					}
				}
				p.errorf(key, paramPath(q), ErrMissing, "required parameter %s is missing%s", q, hint)
			}
			continue
		}
		par, ok := p.param(q, e, paramPath(q))
		ps.given[q] = par
		ps.ok[q] = ok
	}
	p.resolveSameAs(ps)
	p.dipNeeds(ps, mp)
	p.volumeNeeds(ps, mp)
	if mp.family == engine.FamilyTable && len(mp.tables) > 0 {
		p.rockSampleRule(ps, len(mp.tables))
	}
	p.validity(ps, mp)
	return ps
}

// volumeNeeds requires the dimensions when the study has a volumes
// section: length_m, porosity, b2, the cross-section (area_m2, or width_m
// and thickness_m, not both) and the rate (rate_m3_per_day, or a
// rate_schedule, not both).
func (p *parser) volumeNeeds(ps *paramSet, mp *modelParams) {
	if mp.volumes == nil {
		return
	}
	at := mp.volKey
	need := func(q engine.Param, why string) {
		if ps.given[q] == nil {
			ps.missing[q] = true
			p.errorf(at, paramPath(q), ErrMissing, "%s is required%s", q, why)
		}
	}
	need(engine.LengthM, " (the length of the flow path)")
	need(engine.Porosity, "")
	need(engine.B2, " (phase 2's formation volume factor, reservoir m³ per surface m³; 1 for no shrinkage)")
	area, w, t := ps.given[engine.AreaM2], ps.given[engine.WidthM], ps.given[engine.ThicknessM]
	switch {
	case area != nil && (w != nil || t != nil):
		other := w
		if other == nil {
			other = t
		}
		p.errAt(other.Pos, paramPath(other.Param), ErrUnknownKey, "give the cross-section as area_m2 or as width_m and thickness_m, not both")
	case area == nil && w == nil && t == nil:
		ps.missing[engine.AreaM2] = true
		p.errorf(at, paramPath(engine.AreaM2), ErrMissing, "the cross-section is required: area_m2, or width_m and thickness_m")
	case area == nil:
		need(engine.WidthM, " with thickness_m (or give area_m2)")
		need(engine.ThicknessM, " with width_m (or give area_m2)")
	}
	hasSchedule := mp.hasSchedule
	rate := ps.given[engine.RateM3PerDay]
	switch {
	case rate != nil && hasSchedule:
		p.errAt(rate.Pos, paramPath(engine.RateM3PerDay), ErrUnknownKey, "give rate_m3_per_day or rate_schedule, not both")
	case rate == nil && !hasSchedule:
		ps.missing[engine.RateM3PerDay] = true
		p.errorf(at, paramPath(engine.RateM3PerDay), ErrMissing, "the injection rate is required: rate_m3_per_day, or rate_schedule: [[from_day, m3_per_day], …]")
	}
}

// param decodes one parameter's value.
func (p *parser) param(q engine.Param, e entry, path string) (*Parameter, bool) {
	par := &Parameter{Name: q.String(), Param: q, Pos: posOf(e.key), ValuePos: posOf(e.val), fields: map[string]Pos{}}
	par.Spec.Name = par.Name
	n := e.val
	switch {
	case isNull(n):
		p.errorf(n, path, ErrMissing, "no value; want %s", specFormMsg)
		return par, false
	case p.hugeNumber(n, path):
		return par, false
	case n.Kind == yaml.ScalarNode:
		if tag := n.ShortTag(); tag != "!!int" && tag != "!!float" {
			msg := fmt.Sprintf("want %s, got %s", specFormMsg, describe(n))
			if quotedNumber(n) {
				msg += " (drop the quotes)"
			} else if _, isParam := engine.ParamByName(n.Value); isParam {
				msg += fmt.Sprintf(" (to take %s's value write {same_as: %s})", n.Value, n.Value)
			} else if _, isDist := sampler.KindByName(n.Value); isDist {
				msg += fmt.Sprintf(" (write {dist: %s, …} with its fields)", n.Value)
			}
			p.errorf(n, path, ErrType, "%s", msg)
			return par, false
		}
		v, ok := p.number(n, path)
		par.Spec.Kind, par.Spec.Value = sampler.Fixed, v
		return par, ok
	case n.Kind != yaml.MappingNode:
		p.errorf(n, path, ErrType, "want %s, got %s", specFormMsg, describe(n))
		return par, false
	}
	es, _ := p.mapping(n, path, specFormMsg)
	byName := map[string]entry{}
	for _, f := range es {
		byName[f.name] = f
		par.fields[f.name] = posOf(f.val)
	}
	if f, ok := byName["same_as"]; ok {
		return par, p.sameAs(par, es, f, path)
	}
	d, ok := byName["dist"]
	if !ok {
		p.known(es, path, append([]string{"dist", "same_as"}, allFields...), "key")
		p.errorf(n, path+".dist", ErrMissing, "a distribution needs dist: (%s), or write {same_as: name}", strings.Join(distNames, ", "))
		return par, false
	}
	name, ok := p.text(d.val, path+".dist", "a distribution name")
	if !ok {
		return par, false
	}
	kind, ok := sampler.KindByName(name)
	if !ok {
		var msg string
		switch name {
		case "fixed", "constant":
			msg = fmt.Sprintf("there is no dist: %s; write a fixed value as a plain number (%s: 0.2)", name, par.Name)
		case "same_as":
			msg = "write {same_as: name} without dist"
		default:
			msg = fmt.Sprintf("unknown distribution %s; known: %s", quoteShort(name), strings.Join(distNames, ", "))
			if s := suggest(name, distNames); s != "" {
				msg = fmt.Sprintf("unknown distribution %s; did you mean %s?", quoteShort(name), s)
			}
		}
		p.errorf(d.val, path+".dist", ErrUnknownName, "%s", msg)
		return par, false
	}
	sp := &par.Spec
	sp.Kind = kind
	allowed, required := kindFields(kind)
	good := true
	misspelt := map[string]bool{} // required fields an unknown key is a near miss of
	for _, f := range es {
		if f.name == "dist" || contains(allowed, f.name) {
			continue
		}
		good = false
		fp := keyPath(path, f.name)
		if owners, other := fieldKinds[f.name]; other {
			p.errorf(f.key, fp, ErrUnknownKey, "%s takes %s; %s is a field of %s", name, strings.Join(allowed, ", "), f.name, owners)
			continue
		}
		msg := fmt.Sprintf("unknown key %s for %s, which takes %s", quoteShort(f.name), name, strings.Join(allowed, ", "))
		if s := suggest(f.name, allowed); s != "" {
			msg += "; did you mean " + s + "?"
			misspelt[s] = true
		}
		p.errorf(f.key, fp, ErrUnknownKey, "%s", msg)
	}
	for _, f := range required {
		if _, ok := byName[f]; !ok && !misspelt[f] {
			p.errorf(n, path+"."+f, ErrMissing, "%s needs %s", name, f)
			good = false
		}
	}
	num := func(field string, dst *float64, has *bool) {
		f, ok := byName[field]
		if !ok || !contains(allowed, field) {
			return
		}
		v, ok := p.number(f.val, path+"."+field)
		if !ok {
			good = false
			return
		}
		*dst = v
		if has != nil {
			*has = true
		}
	}
	num("min", &sp.Min, &sp.HasMin)
	num("max", &sp.Max, &sp.HasMax)
	num("mode", &sp.Mode, nil)
	num("mean", &sp.Mean, nil)
	num("sd", &sp.SD, nil)
	list := func(field string, dst *[]float64) {
		f, ok := byName[field]
		if !ok || !contains(allowed, field) {
			return
		}
		fp := path + "." + field
		if f.val.Kind != yaml.SequenceNode {
			if isNull(f.val) {
				p.errorf(f.val, fp, ErrMissing, "no value; want a list of numbers")
			} else {
				p.errorf(f.val, fp, ErrType, "want a list of numbers, got %s", describe(f.val))
			}
			good = false
			return
		}
		vs := make([]float64, 0, len(f.val.Content))
		ps := make([]Pos, 0, len(f.val.Content))
		for i, c := range f.val.Content {
			c = deref(c)
			ps = append(ps, posOf(c))
			v, ok := fastNumber(c)
			if !ok {
				v, ok = p.number(c, path+"."+indexPath(field, i))
			}
			if !ok {
				good = false
			}
			vs = append(vs, v)
		}
		*dst = vs
		if field == "values" {
			par.valuesPos = ps
		} else {
			par.weightsPos = ps
		}
	}
	list("values", &sp.Values)
	list("weights", &sp.Weights)
	if sp.Kind == sampler.Discrete && sp.Values == nil {
		sp.Values = []float64{}
	}
	if !good {
		return par, false
	}
	for _, fe := range sp.Validate() {
		fp := path
		if fe.Field != "" && fe.Field != "value" {
			fp = path + "." + fe.Field
		}
		p.errAt(par.FieldPos(fe.Field), fp, ErrValue, "%s", fe.Reason)
		good = false
	}
	return par, good
}

// sameAs decodes {same_as: name}; the name is resolved later.
func (p *parser) sameAs(par *Parameter, es []entry, f entry, path string) bool {
	good := true
	for _, o := range es {
		if o.name == "same_as" {
			continue
		}
		good = false
		if o.name == "dist" {
			p.errorf(o.key, keyPath(path, o.name), ErrUnknownKey, "give either dist or same_as, not both")
		} else {
			p.errorf(o.key, keyPath(path, o.name), ErrUnknownKey, "same_as takes no other keys; %s follows its leader's value exactly", par.Name)
		}
	}
	name, ok := p.text(f.val, path+".same_as", "a parameter name")
	if !ok {
		return false
	}
	par.Spec.Kind, par.Spec.SameAs = sampler.SameAs, name
	switch {
	case name == "":
		p.errorf(f.val, path+".same_as", ErrMissing, "needs a parameter name")
		return false
	case name == par.Name:
		p.errorf(f.val, path+".same_as", ErrCycle, "same_as cycle: %s → %s (a parameter cannot follow itself)", name, name)
		return false
	}
	return good
}

// resolveSameAs checks same_as names, finds cycles and the root of every
// follower.
func (p *parser) resolveSameAs(ps *paramSet) {
	const none = engine.Param(-1)
	var next [engine.NumParams]engine.Param
	for q := engine.Param(0); q < engine.NumParams; q++ {
		next[q] = none
		par := ps.given[q]
		if par == nil || !ps.ok[q] {
			continue
		}
		if par.Spec.Kind != sampler.SameAs {
			ps.root[q], ps.resolved[q] = q, true
			continue
		}
		path := paramPath(par.Param) + ".same_as"
		at := par.FieldPos("same_as")
		leader, known := engine.ParamByName(par.Spec.SameAs)
		switch {
		case !known:
			msg := fmt.Sprintf("unknown parameter %s", quoteShort(par.Spec.SameAs))
			if s := suggest(par.Spec.SameAs, paramNames()); s != "" {
				msg += "; did you mean " + s + "?"
			}
			p.errAt(at, path, ErrUnknownName, "%s", msg)
		case ps.given[leader] == nil:
			p.errAt(at, path, ErrUnknownName, "%s is not given in parameters, so there is no value to follow", leader)
		default:
			next[q] = leader
		}
	}
	// Walk each chain; state 1 marks the chain being walked, 2 a finished one.
	var state [engine.NumParams]int
	for start := engine.Param(0); start < engine.NumParams; start++ {
		if next[start] == none || state[start] != 0 {
			continue
		}
		var chain []engine.Param
		q := start
		for q != none && state[q] == 0 && next[q] != none {
			state[q] = 1
			chain = append(chain, q)
			q = next[q]
		}
		root, ok := none, false
		switch {
		case q == none:
		case state[q] == 1: // a cycle from q back to q
			i := 0
			for chain[i] != q {
				i++
			}
			p.reportCycle(ps, chain[i:])
		case state[q] == 2:
			root, ok = ps.root[q], ps.resolved[q]
		default: // a parameter that is not a follower
			root, ok = q, ps.resolved[q]
		}
		for _, c := range chain {
			state[c] = 2
			ps.root[c], ps.resolved[c] = root, ok
		}
	}
}

// reportCycle reports a same_as cycle once, at the member that comes
// first in the file.
func (p *parser) reportCycle(ps *paramSet, cycle []engine.Param) {
	first := 0
	for i, c := range cycle {
		a, b := ps.given[c].Pos, ps.given[cycle[first]].Pos
		if a.Line < b.Line || a.Line == b.Line && a.Column < b.Column {
			first = i
		}
	}
	names := make([]string, 0, len(cycle)+1)
	for i := range cycle {
		names = append(names, cycle[(first+i)%len(cycle)].String())
	}
	names = append(names, names[0])
	par := ps.given[cycle[first]]
	p.errAt(par.FieldPos("same_as"), paramPath(par.Param)+".same_as", ErrCycle, "same_as cycle: %s", strings.Join(names, " → "))
}

// dipNeeds requires rho1, rho2, perm_md and velocity_m_per_day when the
// dip is given and not fixed at zero.
//
// With a volumes section and a constant rate, velocity_m_per_day may be
// left out: it is then the rate over the cross-section.
func (p *parser) dipNeeds(ps *paramSet, mp *modelParams) {
	dip := ps.given[engine.DipDeg]
	if dip == nil {
		return
	}
	why := "dip_deg is not 0"
	switch {
	case ps.resolved[engine.DipDeg]:
		v, fixed := ps.fixed(engine.DipDeg)
		if fixed && v == 0 {
			return
		}
		if !fixed {
			why = "dip_deg is uncertain"
		}
	case dip.Spec.Kind == sampler.Fixed:
		return // a bad plain value: its own error says enough
	case dip.Spec.Kind != sampler.SameAs:
		why = "dip_deg is uncertain"
	}
	for _, q := range []engine.Param{engine.Rho1, engine.Rho2, engine.PermMD, engine.VelocityMPerDay} {
		if q == engine.VelocityMPerDay && mp.volumes != nil && !mp.hasSchedule {
			continue
		}
		if ps.given[q] == nil {
			ps.missing[q] = true
			p.errAt(dip.Pos, paramPath(q), ErrMissing, "%s is required because %s (gravity needs rho1, rho2, perm_md and velocity_m_per_day)", q, why)
		}
	}
}

// support is the set of values a parameter can take: the listed points,
// or the open interval (lo, hi) of a continuous distribution.
type support struct {
	lo, hi float64
	points []float64
	spec   *sampler.Spec
}

func supportOf(sp *sampler.Spec) support {
	s := support{lo: math.Inf(-1), hi: math.Inf(1), spec: sp}
	switch sp.Kind {
	case sampler.Fixed:
		s.points = []float64{sp.Value}
	case sampler.Discrete:
		s.points = discretePoints(sp)
	case sampler.Uniform, sampler.Triangular, sampler.PERT:
		s.lo, s.hi = sp.Min, sp.Max
	case sampler.Normal, sampler.LogNormal:
		if sp.Kind == sampler.LogNormal {
			s.lo = 0
		}
		if sp.HasMin {
			s.lo = math.Max(s.lo, sp.Min)
		}
		if sp.HasMax {
			s.hi = sp.Max
		}
	}
	if s.points != nil {
		s.lo, s.hi = math.Inf(1), math.Inf(-1)
		for _, v := range s.points {
			s.lo, s.hi = math.Min(s.lo, v), math.Max(s.hi, v)
		}
	}
	return s
}

func (s support) single() bool { return s.points != nil && s.lo == s.hi }

// bound is an interval a parameter must lie in.
type bound struct {
	lo, hi         float64
	loOpen, hiOpen bool
}

func (b bound) holds(v float64) bool {
	return (v > b.lo || !b.loOpen && v == b.lo) && (v < b.hi || !b.hiOpen && v == b.hi)
}

// meets reports whether the support meets the bound: a point inside it, or
// an overlap of positive length with a continuous range (a single point of
// a continuous distribution has probability zero).
func (s support) meets(b bound) bool {
	if s.points != nil {
		for _, v := range s.points {
			if b.holds(v) {
				return true
			}
		}
		return false
	}
	return math.Max(s.lo, b.lo) < math.Min(s.hi, b.hi)
}

// infNonNeg returns the smallest non-negative value the support comes
// arbitrarily close to (for the sum rules; the single rules have already
// checked that non-negative values exist).
func (s support) infNonNeg() float64 {
	if s.points != nil {
		m := math.Inf(1)
		for _, v := range s.points {
			if v >= 0 {
				m = math.Min(m, v)
			}
		}
		return m
	}
	return math.Max(s.lo, 0)
}

// broken says that the support never satisfies rule.
func (s support) broken(name, rule string) string {
	if s.single() {
		return fmt.Sprintf("%s = %g breaks %s", name, s.lo, rule)
	}
	if s.points != nil {
		return fmt.Sprintf("no discrete value of %s (%g … %g) satisfies %s, so no case could be valid", name, s.lo, s.hi, rule)
	}
	lo, hi := fmt.Sprintf("[%g", s.lo), fmt.Sprintf("%g]", s.hi)
	if math.IsInf(s.lo, -1) {
		lo = "(-∞"
	} else if s.spec.Kind == sampler.LogNormal && s.lo == 0 {
		lo = "(0"
	}
	if math.IsInf(s.hi, 1) {
		hi = "∞)"
	}
	return fmt.Sprintf("the %s range %s, %s of %s never satisfies %s, so no case could be valid", s.spec.Kind, lo, hi, name, rule)
}

// inf text for the sum rules: "s1r = 0.2" or "s1r ≥ 0.2".
func (s support) atLeast(name string) string {
	if s.single() {
		return fmt.Sprintf("%s = %g", name, s.lo)
	}
	return fmt.Sprintf("%s ≥ %g", name, s.infNonNeg())
}

// validity applies the DESIGN §2 validity rules (engine.Params.Validate)
// to what the study can give: an error when no case could ever satisfy a
// rule. The rule texts are the engine's.
func (p *parser) validity(ps *paramSet, mp *modelParams) {
	before := len(p.errs)
	var sup [engine.NumParams]support
	var have [engine.NumParams]bool
	for q := engine.Param(0); q < engine.NumParams; q++ {
		if sp, ok := ps.spec(q); ok {
			sup[q], have[q] = supportOf(sp), true
		}
	}
	var bad [engine.NumParams]bool
	report := func(q engine.Param, format string, args ...any) {
		bad[q] = true
		if ps.given[q] == nil {
			return // a default value: cannot happen for the rules below
		}
		p.errAt(ps.given[q].ValuePos, paramPath(q), ErrValue, format, args...)
	}
	inf := math.Inf(1)
	singles := []struct {
		q    engine.Param
		b    bound
		rule string
	}{
		{engine.S1r, bound{0, inf, false, true}, "s1r ≥ 0"},
		{engine.S2r, bound{0, inf, false, true}, "s2r ≥ 0"},
		{engine.S1Init, bound{0, inf, false, true}, "s1_init ≥ 0"},
		{engine.Kr1Max, bound{0, 1, true, false}, "0 < kr1_max ≤ 1"},
		{engine.Kr2Max, bound{0, 1, true, false}, "0 < kr2_max ≤ 1"},
		{engine.N1, bound{0, inf, true, true}, "n1 > 0"},
		{engine.N2, bound{0, inf, true, true}, "n2 > 0"},
		{engine.Mu1CP, bound{0, inf, true, true}, "mu1_cp > 0"},
		{engine.Mu2CP, bound{0, inf, true, true}, "mu2_cp > 0"},
		{engine.DipDeg, bound{-90, 90, false, false}, "|dip_deg| ≤ 90"},
		{engine.Rho1, bound{0, inf, false, true}, "rho1 ≥ 0"},
		{engine.Rho2, bound{0, inf, false, true}, "rho2 ≥ 0"},
		{engine.LetL1, bound{0, inf, true, true}, "let_l1 > 0"},
		{engine.LetE1, bound{0, inf, true, true}, "let_e1 > 0"},
		{engine.LetT1, bound{0, inf, true, true}, "let_t1 > 0"},
		{engine.LetL2, bound{0, inf, true, true}, "let_l2 > 0"},
		{engine.LetE2, bound{0, inf, true, true}, "let_e2 > 0"},
		{engine.LetT2, bound{0, inf, true, true}, "let_t2 > 0"},
		{engine.LengthM, bound{0, inf, true, true}, "length_m > 0"},
		{engine.AreaM2, bound{0, inf, true, true}, "0 < area_m2 < ∞"},
		{engine.WidthM, bound{0, inf, true, true}, "width_m > 0"},
		{engine.ThicknessM, bound{0, inf, true, true}, "thickness_m > 0"},
		{engine.Porosity, bound{0, 1, true, false}, "0 < porosity ≤ 1"},
		{engine.B2, bound{0, inf, true, true}, "b2 > 0"},
		{engine.RateM3PerDay, bound{0, inf, true, true}, "rate_m3_per_day > 0"},
	}
	for _, r := range singles {
		q := r.q
		if !have[q] || sup[q].meets(r.b) {
			continue
		}
		// A follower shares its leader's values: report once, at the
		// leader, unless only the follower's own rule fails.
		if root := ps.root[q]; ps.given[q] != nil && root != q && bad[root] {
			bad[q] = true
			continue
		}
		report(q, "%s", sup[q].broken(q.String(), r.rule))
	}
	// The sum rules, x + y < 1 over the non-negative values; blame the
	// engine's parameter unless it is fixed and the other one is not, and
	// report a parameter once.
	singleBad := bad
	var sumBad [engine.NumParams]bool
	sum := func(a, b, blame engine.Param, rule string) {
		if !have[a] || !have[b] || singleBad[a] || singleBad[b] {
			return
		}
		if sup[a].infNonNeg()+sup[b].infNonNeg() < 1 {
			return
		}
		other := a
		if blame == a {
			other = b
		}
		if sup[blame].single() && !sup[other].single() {
			blame = other
		}
		if sumBad[blame] {
			return
		}
		sumBad[blame] = true
		if sup[a].single() && sup[b].single() {
			report(blame, "%s and %s break %s", sup[a].atLeast(a.String()), sup[b].atLeast(b.String()), rule)
			return
		}
		report(blame, "%s cannot hold in any case: %s and %s", rule, sup[a].atLeast(a.String()), sup[b].atLeast(b.String()))
	}
	sum(engine.S1r, engine.S2r, engine.S2r, "s1r + s2r < 1")
	sum(engine.S1Init, engine.S2r, engine.S1Init, "s1_init < 1 − s2r")
	// perm_md and velocity_m_per_day must be positive when the dip is not
	// zero and the densities differ.
	if have[engine.DipDeg] && have[engine.Rho1] && have[engine.Rho2] {
		dipZero := sup[engine.DipDeg].meets(bound{0, 0, false, false})
		sameRho := false
		if r1, r2 := sup[engine.Rho1], sup[engine.Rho2]; r1.points != nil && r2.points != nil {
			for _, a := range r1.points {
				for _, b := range r2.points {
					sameRho = sameRho || a == b
				}
			}
		}
		if !dipZero && !sameRho {
			for _, r := range []struct {
				q    engine.Param
				rule string
			}{{engine.PermMD, "perm_md > 0 when dipping"}, {engine.VelocityMPerDay, "velocity_m_per_day > 0 when dipping"}} {
				if !have[r.q] || sup[r.q].meets(bound{0, inf, true, true}) {
					continue
				}
				report(r.q, "%s", sup[r.q].broken(r.q.String(), r.rule))
			}
		}
	}
	if len(p.errs) > before || mp.family == engine.FamilyTable && len(mp.tables) == 0 {
		return // (a table that could not be read has its own error)
	}
	// When every parameter is fixed the engine's own check is exact: run it
	// too, so that a rule added to the engine is never missed here.
	var params engine.Params
	for q := engine.Param(0); q < engine.NumParams; q++ {
		v, fixed := ps.fixed(q)
		if !fixed {
			return
		}
		params[q] = v
	}
	model := mp.model(ps, nil)
	model.Resolve(&params)
	if err := model.Validate(&params); err != nil {
		q := engine.S1Init
		if ve, ok := err.(*engine.ValidityError); ok {
			q = ve.Param
		}
		if ps.given[q] != nil {
			p.errAt(ps.given[q].ValuePos, paramPath(q), ErrValue, "%s", err.Error())
		} else {
			p.errAt(Pos{}, paramPath(q), ErrValue, "%s", err.Error())
		}
	}
}

// correlations decodes and checks the correlations list. ps is nil when
// the study has no parameters section.
func (p *parser) correlations(n *yaml.Node, ps *paramSet) []Correlation {
	const want = "a list of [a, b, rho] entries"
	if n.Kind != yaml.SequenceNode {
		p.errorf(n, "correlations", ErrType, "want %s, got %s", want, describe(n))
		return nil
	}
	var out []Correlation
	seen := map[[2]engine.Param]int{}
	for k, item := range n.Content {
		item = deref(item)
		path := indexPath("correlations", k)
		if item.Kind != yaml.SequenceNode {
			p.errorf(item, path, ErrType, "want [a, b, rho], got %s", describe(item))
			continue
		}
		if len(item.Content) != 3 {
			p.errorf(item, path, ErrType, "a correlation is [a, b, rho]; this entry has %d items", len(item.Content))
			continue
		}
		c := Correlation{Pos: posOf(item)}
		good := true
		var qs [2]engine.Param
		for i, dst := range []*string{&c.A, &c.B} {
			node := deref(item.Content[i])
			ip := indexPath(path, i)
			name, ok := p.text(node, ip, "a parameter name")
			if !ok {
				good = false
				continue
			}
			*dst = name
			if !p.correlatable(node, ip, name, ps, &qs[i]) {
				good = false
			}
		}
		rn := deref(item.Content[2])
		rho, ok := p.number(rn, indexPath(path, 2))
		switch {
		case !ok:
			good = false
		case !(math.Abs(rho) < 1):
			p.errorf(rn, indexPath(path, 2), ErrValue, "a rank correlation must lie strictly between -1 and 1, got %s", rn.Value)
			good = false
		}
		c.Rho = rho
		if good && c.A == c.B {
			p.errorf(deref(item.Content[1]), indexPath(path, 1), ErrValue, "%s cannot be correlated with itself", c.A)
			good = false
		}
		if good {
			pair := [2]engine.Param{min(qs[0], qs[1]), max(qs[0], qs[1])}
			if first, dup := seen[pair]; dup {
				p.errorf(item, path, ErrDuplicateKey, "the pair %s, %s is already correlated at line %d", c.A, c.B, out[first].Pos.Line)
				good = false
			} else {
				seen[pair] = len(out)
			}
		}
		if good {
			out = append(out, c)
		}
	}
	return out
}

// correlatable checks that name is an uncertain, non-follower parameter
// of the study.
func (p *parser) correlatable(n *yaml.Node, path, name string, ps *paramSet, q *engine.Param) bool {
	par, known := engine.ParamByName(name)
	if !known {
		msg := fmt.Sprintf("unknown parameter %s", quoteShort(name))
		if s := suggest(name, paramNames()); s != "" {
			msg += "; did you mean " + s + "?"
		}
		p.errorf(n, path, ErrUnknownName, "%s", msg)
		return false
	}
	*q = par
	if ps == nil {
		return true
	}
	g := ps.given[par]
	switch {
	case g == nil:
		if ps.missing[par] {
			return false
		}
		p.errorf(n, path, ErrValue, "%s is not in parameters (so fixed at %g); only uncertain parameters can be correlated", name, Default(par))
		return false
	case !ps.ok[par]:
		return false
	case g.Spec.Kind == sampler.SameAs:
		p.errorf(n, path, ErrValue, "%s follows %s (same_as), so it cannot be correlated on its own; correlate %s instead", name, g.Spec.SameAs, g.Spec.SameAs)
		return false
	}
	if _, fixed := ps.fixed(par); fixed {
		p.errorf(n, path, ErrValue, "%s is fixed; only uncertain parameters can be correlated", name)
		return false
	}
	return true
}
