package sweep

import (
	"errors"
	"slices"
	"strings"
	"testing"
)

// env returns a lookup function over a fixed environment.
func env(vars map[string]string) func(string) (string, bool) {
	return func(name string) (string, bool) {
		v, ok := vars[name]
		return v, ok
	}
}

// slurmTask is the environment Slurm gives task id of an array job
// submitted with --array=lo-hi (every task: SLURM_ARRAY_JOB_ID, _TASK_ID,
// _TASK_MIN, _TASK_MAX, _TASK_COUNT and _TASK_STEP; sbatch(1), "OUTPUT
// ENVIRONMENT VARIABLES", and the Slurm job array documentation).
func slurmTask(id, lo, hi, count, step string) map[string]string {
	return map[string]string{
		"SLURM_JOB_ID": "4242", "SLURM_ARRAY_JOB_ID": "4240",
		"SLURM_ARRAY_TASK_ID": id, "SLURM_ARRAY_TASK_MIN": lo, "SLURM_ARRAY_TASK_MAX": hi,
		"SLURM_ARRAY_TASK_COUNT": count, "SLURM_ARRAY_TASK_STEP": step,
	}
}

func TestShardFromEnv(t *testing.T) {
	for _, c := range []struct {
		name   string
		vars   map[string]string
		shards int
		want   Shard
		err    string // a part of the message when refused
	}{
		// sbatch --array=1-4: tasks 1 to 4 are shards 1/4 to 4/4.
		{name: "slurm 1-4 first", vars: slurmTask("1", "1", "4", "4", "1"), want: Shard{1, 4}},
		{name: "slurm 1-4 third", vars: slurmTask("3", "1", "4", "4", "1"), want: Shard{3, 4}},
		{name: "slurm 1-4 last", vars: slurmTask("4", "1", "4", "4", "1"), want: Shard{4, 4}},
		// sbatch --array=0-7 (and 0-7%2: a limit on running tasks changes
		// no variable).
		{name: "slurm 0-7 first", vars: slurmTask("0", "0", "7", "8", "1"), want: Shard{1, 8}},
		{name: "slurm 0-7 last", vars: slurmTask("7", "0", "7", "8", "1"), want: Shard{8, 8}},
		// sbatch --array=10-12: the index is counted from the minimum.
		{name: "slurm 10-12", vars: slurmTask("11", "10", "12", "3", "1"), want: Shard{2, 3}},
		{name: "slurm one task", vars: slurmTask("5", "5", "5", "1", "1"), want: Shard{1, 1}},
		{name: "slurm without max or step", vars: map[string]string{"SLURM_ARRAY_TASK_ID": "2", "SLURM_ARRAY_TASK_MIN": "1", "SLURM_ARRAY_TASK_COUNT": "2"}, want: Shard{2, 2}},
		{name: "slurm --shards agrees", vars: slurmTask("2", "1", "4", "4", "1"), shards: 4, want: Shard{2, 4}},
		{name: "slurm with spaces", vars: slurmTask(" 2 ", "1", "4", "4", "1"), want: Shard{2, 4}},

		// sbatch --array=0-6:2 (tasks 0, 2, 4, 6): step 2 is refused.
		{name: "slurm step 2", vars: slurmTask("2", "0", "6", "4", "2"), err: "step is 2"},
		// sbatch --array=1,5,9: not a range by 1.
		{name: "slurm list", vars: slurmTask("5", "1", "9", "3", "1"), err: "do not run by 1 from 1 to 9"},
		{name: "slurm --shards disagrees", vars: slurmTask("2", "1", "4", "4", "1"), shards: 8, err: "--shards 8 disagrees with the Slurm array's 4 tasks"},
		{name: "slurm no min", vars: map[string]string{"SLURM_ARRAY_TASK_ID": "2", "SLURM_ARRAY_TASK_COUNT": "4"}, err: "SLURM_ARRAY_TASK_MIN is not"},
		{name: "slurm no count", vars: map[string]string{"SLURM_ARRAY_TASK_ID": "2", "SLURM_ARRAY_TASK_MIN": "1"}, err: "SLURM_ARRAY_TASK_COUNT is not"},
		{name: "slurm id below min", vars: slurmTask("0", "1", "4", "4", "1"), err: "is not among the 4 tasks"},
		{name: "slurm not a number", vars: slurmTask("two", "1", "4", "4", "1"), err: `SLURM_ARRAY_TASK_ID="two" is not a whole number`},
		{name: "slurm job, not an array", vars: map[string]string{"SLURM_JOB_ID": "77"}, err: "not an array job"},

		// A Kubernetes indexed Job with completions: 4 sets
		// JOB_COMPLETION_INDEX 0 to 3 (Kubernetes documentation, "Jobs",
		// completion mode Indexed).
		{name: "kubernetes first", vars: map[string]string{"JOB_COMPLETION_INDEX": "0"}, shards: 4, want: Shard{1, 4}},
		{name: "kubernetes last", vars: map[string]string{"JOB_COMPLETION_INDEX": "3"}, shards: 4, want: Shard{4, 4}},
		{name: "kubernetes without --shards", vars: map[string]string{"JOB_COMPLETION_INDEX": "1"}, err: "--shard auto --shards K"},
		{name: "kubernetes index too large", vars: map[string]string{"JOB_COMPLETION_INDEX": "4"}, shards: 4, err: "JOB_COMPLETION_INDEX=4 is not below --shards 4"},
		{name: "kubernetes negative", vars: map[string]string{"JOB_COMPLETION_INDEX": "-1"}, shards: 4, err: "is not a whole number"},

		{name: "empty counts as unset", vars: map[string]string{"SLURM_ARRAY_TASK_ID": "", "JOB_COMPLETION_INDEX": "2"}, shards: 3, want: Shard{3, 3}},
		{name: "neither", vars: map[string]string{"HOME": "/root"}, err: "neither SLURM_ARRAY_TASK_ID (a Slurm array task) nor JOB_COMPLETION_INDEX (a Kubernetes indexed Job) is set"},
		{name: "both", vars: map[string]string{"SLURM_ARRAY_TASK_ID": "1", "SLURM_ARRAY_TASK_MIN": "1", "SLURM_ARRAY_TASK_COUNT": "2", "JOB_COMPLETION_INDEX": "0"}, shards: 2, err: "ambiguous"},
	} {
		t.Run(c.name, func(t *testing.T) {
			got, err := ShardFromEnv(env(c.vars), c.shards)
			if c.err != "" {
				var se *ShardError
				if !errors.As(err, &se) || !strings.Contains(err.Error(), c.err) {
					t.Fatalf("error %v; want a ShardError containing %q", err, c.err)
				}
				if se.Flag != "--shard auto" || se.Allowed == "" || strings.Contains(err.Error(), "\n") {
					t.Errorf("error %q: want one line on --shard auto saying what is allowed", err)
				}
				return
			}
			if err != nil || got != c.want {
				t.Fatalf("got %v, %v; want %v", got, err, c.want)
			}
		})
	}
}

func TestParseShard(t *testing.T) {
	for _, c := range []struct {
		arg  string
		want Shard
		err  string
	}{
		{"1/4", Shard{1, 4}, ""},
		{"4/4", Shard{4, 4}, ""},
		{"1/1", Shard{1, 1}, ""},
		{" 3 / 8 ", Shard{3, 8}, ""},
		{"0/4", Shard{}, "shard 0 of 4 is out of range (shards are counted from 1)"},
		{"5/4", Shard{}, "shard 5 of 4 is out of range"},
		{"1/0", Shard{}, "0 shards are out of range"},
		{"1/2000000", Shard{}, "2000000 shards are out of range"},
		{"3", Shard{}, "is not I/K"},
		{"a/b", Shard{}, "whole numbers"},
		{"1.5/4", Shard{}, "whole numbers"},
		{"", Shard{}, "is not I/K"},
	} {
		got, err := ParseShard(c.arg)
		if c.err != "" {
			if err == nil || !strings.Contains(err.Error(), c.err) || !strings.HasPrefix(err.Error(), "--shard "+c.arg+": ") || !strings.Contains(err.Error(), "; allowed: ") {
				t.Errorf("ParseShard(%q): error %v; want one naming the flag, containing %q and saying what is allowed", c.arg, err, c.err)
			}
			continue
		}
		if err != nil || got != c.want {
			t.Errorf("ParseShard(%q) = %v, %v; want %v", c.arg, got, err, c.want)
		}
		if got.String() != strings.ReplaceAll(c.arg, " ", "") {
			t.Errorf("%v.String() = %q", got, got.String())
		}
	}
}

// TestShardHolds checks the points of each shard: i mod K = I − 1, every
// point in exactly one shard (written out by hand for K = 3 over 10
// points).
func TestShardHolds(t *testing.T) {
	want := map[int][]int{1: {0, 3, 6, 9}, 2: {1, 4, 7}, 3: {2, 5, 8}}
	for i, pts := range want {
		var got []int
		for p := range 10 {
			if (Shard{i, 3}).Holds(p) {
				got = append(got, p)
			}
		}
		if !slices.Equal(got, pts) {
			t.Errorf("shard %d/3 holds %v; want %v", i, got, pts)
		}
	}
	if !(Shard{}).Holds(7) || !(Shard{1, 1}).Holds(7) {
		t.Error("no sharding (or one shard) must hold every point")
	}
}
