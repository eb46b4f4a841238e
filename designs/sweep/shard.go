package sweep

import (
	"fmt"
	"strconv"
	"strings"
)

// Shard is one part of a sharded sweep (--shard I/K): the points whose
// index i (from 0) has i mod Count = Index − 1. Index runs from 1 to
// Count.
type Shard struct {
	Index, Count int
}

// String writes the shard as it is given on the command line: "2/8".
func (s Shard) String() string { return strconv.Itoa(s.Index) + "/" + strconv.Itoa(s.Count) }

// Holds reports whether point i belongs to the shard.
func (s Shard) Holds(i int) bool { return s.Count <= 1 || i%s.Count == s.Index-1 }

// MaxShards is the largest number of shards: more would leave most of them
// without a point on any grid a cluster can hold.
const MaxShards = 1_000_000

// ShardError is a shard that cannot be used: --shard I/K written wrongly,
// or --shard auto without a scheduler's index in the environment. It reads
// "FLAG: what is wrong; allowed: what is".
type ShardError struct {
	// Flag is the flag as given ("--shard 0/4", "--shard auto").
	Flag    string
	Msg     string
	Allowed string
}

func (e *ShardError) Error() string {
	if e.Allowed == "" {
		return e.Flag + ": " + e.Msg
	}
	return e.Flag + ": " + e.Msg + "; allowed: " + e.Allowed
}

// allowedShard says what --shard takes.
const allowedShard = "I/K with K from 1 to 1000000 and I from 1 to K (--shard 3/8 computes the points i with i mod 8 = 2), or auto (the index of a Slurm array task or a Kubernetes indexed Job)"

// ParseShard reads --shard I/K.
func ParseShard(arg string) (Shard, error) {
	bad := func(msg string) (Shard, error) {
		return Shard{}, &ShardError{Flag: "--shard " + arg, Msg: msg, Allowed: allowedShard}
	}
	i, k, ok := strings.Cut(strings.TrimSpace(arg), "/")
	if !ok {
		return bad("is not I/K")
	}
	index, err1 := strconv.Atoi(strings.TrimSpace(i))
	count, err2 := strconv.Atoi(strings.TrimSpace(k))
	switch {
	case err1 != nil || err2 != nil:
		return bad("is not I/K with I and K whole numbers")
	case count < 1 || count > MaxShards:
		return bad(fmt.Sprintf("%d shards are out of range", count))
	case index < 1 || index > count:
		return bad(fmt.Sprintf("shard %d of %d is out of range (shards are counted from 1)", index, count))
	}
	return Shard{Index: index, Count: count}, nil
}

// The environment variables --shard auto reads. Slurm sets the first five
// in every task of an array job (sbatch --array); Kubernetes sets
// JOB_COMPLETION_INDEX in every pod of a Job with completionMode: Indexed.
const (
	EnvSlurmTask  = "SLURM_ARRAY_TASK_ID"
	EnvSlurmMin   = "SLURM_ARRAY_TASK_MIN"
	EnvSlurmMax   = "SLURM_ARRAY_TASK_MAX"
	EnvSlurmCount = "SLURM_ARRAY_TASK_COUNT"
	EnvSlurmStep  = "SLURM_ARRAY_TASK_STEP"
	EnvSlurmJob   = "SLURM_JOB_ID"
	EnvK8sIndex   = "JOB_COMPLETION_INDEX"
)

// ShardFromEnv finds the shard of --shard auto in the environment that
// lookup reads (os.LookupEnv in the command):
//
//   - a Slurm array task: index SLURM_ARRAY_TASK_ID − SLURM_ARRAY_TASK_MIN
//     (from 0) of SLURM_ARRAY_TASK_COUNT tasks; an array whose indices do
//     not run by 1 from its minimum to its maximum (--array=0-30:10, or a
//     list such as --array=1,5,9) is refused, since its indices do not
//     number the shards;
//   - a Kubernetes indexed Job: index JOB_COMPLETION_INDEX (from 0) of
//     shards tasks, which --shards K gives (the count is not in the pod's
//     environment).
//
// A variable set to an empty value counts as unset. shards is the value
// of --shards (0 when it was not given); with Slurm,
// when given, it must agree with the array. The shard returned counts
// from 1, as --shard I/K does.
func ShardFromEnv(lookup func(string) (string, bool), shards int) (Shard, error) {
	const flag = "--shard auto"
	bad := func(msg, allowed string) (Shard, error) {
		return Shard{}, &ShardError{Flag: flag, Msg: msg, Allowed: allowed}
	}
	get := func(name string) (string, bool) {
		v, _ := lookup(name)
		v = strings.TrimSpace(v)
		return v, v != ""
	}
	whole := func(name string) (int, bool, error) {
		v, ok := get(name)
		if !ok {
			return 0, false, nil
		}
		n, err := strconv.Atoi(v)
		if err != nil || n < 0 {
			_, err := bad(fmt.Sprintf("%s=%q is not a whole number of 0 or more", name, v), "the value the scheduler sets")
			return 0, true, err
		}
		return n, true, nil
	}
	task, slurm, err := whole(EnvSlurmTask)
	if err != nil {
		return Shard{}, err
	}
	index, k8s, err := whole(EnvK8sIndex)
	if err != nil {
		return Shard{}, err
	}
	switch {
	case slurm && k8s:
		return bad(fmt.Sprintf("both %s (Slurm) and %s (Kubernetes) are set, so the shard is ambiguous", EnvSlurmTask, EnvK8sIndex),
			"one scheduler's variables, or --shard I/K")
	case slurm:
		return slurmShard(task, whole, get, shards)
	case k8s:
		if shards == 0 {
			return bad(fmt.Sprintf("%s=%d (a Kubernetes indexed Job) gives the index but not the number of shards", EnvK8sIndex, index),
				"--shard auto --shards K, with K the Job's completions")
		}
		if index >= shards {
			return bad(fmt.Sprintf("%s=%d is not below --shards %d", EnvK8sIndex, index, shards),
				"--shards equal to the Job's completions (its indices run from 0 to completions − 1)")
		}
		return Shard{Index: index + 1, Count: shards}, nil
	}
	if _, ok := get(EnvSlurmJob); ok {
		return bad(fmt.Sprintf("this Slurm job is not an array job (%s is set, %s is not)", EnvSlurmJob, EnvSlurmTask),
			"an array job (sbatch --array=1-K), or --shard I/K")
	}
	return bad(fmt.Sprintf("no shard index in the environment: neither %s (a Slurm array task) nor %s (a Kubernetes indexed Job) is set", EnvSlurmTask, EnvK8sIndex),
		"a run inside a Slurm array job or a Kubernetes indexed Job, or --shard I/K")
}

// slurmShard is the shard of a Slurm array task.
func slurmShard(task int, whole func(string) (int, bool, error), get func(string) (string, bool), shards int) (Shard, error) {
	bad := func(msg, allowed string) (Shard, error) {
		return Shard{}, &ShardError{Flag: "--shard auto", Msg: msg, Allowed: allowed}
	}
	const ranged = "an array whose indices run by 1 (sbatch --array=1-K, or 0-(K−1); a %N limit on running tasks is fine), or --shard I/K"
	if step, ok := get(EnvSlurmStep); ok && step != "1" {
		return bad(fmt.Sprintf("the Slurm array's step is %s (%s), so its task indices do not number the shards one by one", step, EnvSlurmStep), ranged)
	}
	lo, ok, err := whole(EnvSlurmMin)
	if err != nil {
		return Shard{}, err
	}
	if !ok {
		return bad(fmt.Sprintf("%s is set but %s is not", EnvSlurmTask, EnvSlurmMin), "the variables Slurm sets in an array task, or --shard I/K")
	}
	count, ok, err := whole(EnvSlurmCount)
	if err != nil {
		return Shard{}, err
	}
	if !ok || count < 1 {
		return bad(fmt.Sprintf("%s is set but %s is not", EnvSlurmTask, EnvSlurmCount), "the variables Slurm sets in an array task, or --shard I/K")
	}
	if hi, ok, err := whole(EnvSlurmMax); err != nil {
		return Shard{}, err
	} else if ok && hi-lo+1 != count {
		return bad(fmt.Sprintf("the Slurm array's %d tasks do not run by 1 from %d to %d (an index list?), so their indices do not number the shards", count, lo, hi), ranged)
	}
	i := task - lo
	if i < 0 || i >= count {
		return bad(fmt.Sprintf("%s=%d is not among the %d tasks from %s=%d", EnvSlurmTask, task, count, EnvSlurmMin, lo), ranged)
	}
	if count > MaxShards {
		return bad(fmt.Sprintf("%d array tasks are more than %d shards", count, MaxShards), "at most 1000000 tasks")
	}
	if shards != 0 && shards != count {
		return bad(fmt.Sprintf("--shards %d disagrees with the Slurm array's %d tasks (%s)", shards, count, EnvSlurmCount),
			"--shards left out (Slurm gives the count), or equal to the array's tasks")
	}
	return Shard{Index: i + 1, Count: count}, nil
}
