// Package studies reads and validates sweepstat study files (DESIGN §4):
// YAML documents that name a scenario, the number of cases and the seed,
// give each displacement parameter as a fixed value, a distribution or a
// same_as link, and set the report, tornado and sensitivity options.
//
// [Parse] and [Load] check a file completely before anything runs and
// report every problem in one pass, as an [ErrorList] of [*Error] sorted by
// position, each printing
//
//	file:line:col: key.path: message
//
// with a sentinel cause ([ErrSyntax], [ErrUnknownKey], [ErrDuplicateKey],
// [ErrType], [ErrMissing], [ErrValue], [ErrCycle], [ErrUnknownName]) for
// errors.Is.
//
// Conventions. Phase 1 is the injected phase and saturations are phase-1
// saturations, as in package engine. A [Study] lists its parameters in
// engine.Param order whatever their order in the file, and
// [Study.Specs] gives the sampler one specification per engine.Param in
// that order, with every parameter the file leaves out fixed at its
// [Default] (0: no dip, and then no densities, permeability or velocity
// are needed). Defaults for left-out keys are the Default constants and
// [DefaultPVI]; percentiles default to the reserves convention
// (exceedance: P90 is the low value). Positive definiteness of the
// correlation matrix is for the sampler to check; [Study.CorrelationError]
// maps its complaint back to the file.
package studies
