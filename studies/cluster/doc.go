// Package cluster holds no code: its folder carries the recipes for
// running studies as shards on a cluster scheduler (Slurm job arrays,
// Kubernetes Indexed Jobs) and a merge after them, a script that starts a
// one-node Slurm cluster on localhost, and the tests that check the
// recipes: the Slurm one end to end on a real cluster when one is
// reachable, the Kubernetes manifests against the command line's flags.
package cluster
