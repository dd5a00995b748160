// Package batch runs whole studies: it samples every case with package
// sampler, solves them in parallel with package engine, streams them in
// case order into cases.arrow (Apache Arrow IPC file format, record
// batches of DefaultBatchRows cases), then computes the summary, curves,
// tornado and sensitivity tables from that file with package summarize,
// renders report.html with its SVG charts, and writes run.json.
//
// Conventions. A study writes into Out/<study name>/. Everything is staged
// in a hidden folder beside it and swapped in only when complete, so an
// interrupted run never leaves a folder or file that looks finished; a
// lock file beside it keeps a second process from writing the same study.
// An existing folder is kept unless Options.Force is set. Column names and
// units come from package engine; percentiles follow the study's
// convention (reserves convention by default: P90 is the low value).
//
// Runs are deterministic: the same study and seed give the same bytes for
// any worker count. Shards (Options.Shard) cover whole record batches, so
// [Merge] lays them end to end into the file a single run writes.
package batch
