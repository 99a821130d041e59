// Package studyrun runs a whole study described in one TOML file: it plans
// the study as stages of independent work units (simulate one grid point of
// one size, gather a size's points into its dataset, train one ensemble
// member, score one block of a size's snapshots at every grid point with
// every member, scan one size from those blocks, finish with the
// extrapolation and the study's summary), runs them here one by one or in several local processes, or
// writes and submits one Slurm job array per stage.
//
// Every unit writes its outputs atomically into the study's output folder
// and then a stamp (stamps/UNIT.json) holding the fingerprint of its inputs
// (the study settings that affect it and the hashes of its input files) and
// the hashes of its outputs. A unit whose stamp matches is skipped, so an
// interrupted study resumes where it stopped. Seeds derive from the study's
// seed and the unit's name, and every unit's thread count is fixed by the
// study file, so the results do not depend on how the units were run.
//
// A run holds an exclusive lock on OUT/.lock, so that two runs never write
// into one folder; a unit run alone (--unit) locks that unit instead.
package studyrun
