package studies

import _ "embed"

// The embedded study files. Strings, so that no caller can change them.
var (
	//go:embed demo.yaml
	demoYAML string
	//go:embed template.yaml
	templateYAML string
)

// DemoSourceName is the Study.Source of the embedded demo study.
const DemoSourceName = "embedded:demo.yaml"

// Demo parses the embedded demo study ([DemoSource]): an invented up-dip
// waterflood of 20,000 cases with an uncertain dip, densities and
// permeability, and correlated inputs. It is what `sweepstat run` runs
// without a study file. Its Source is [DemoSourceName].
func Demo() (*Study, error) { return Parse(DemoSourceName, DemoSource()) }

// DemoSource returns the text of the embedded demo study, a new slice on
// each call.
func DemoSource() []byte { return []byte(demoYAML) }

// InitTemplate returns the commented example study that `sweepstat init`
// writes: every key with its meaning and default, and every form of a
// parameter's value. It parses without error. The slice is new on each
// call.
func InitTemplate() []byte { return []byte(templateYAML) }
