package main

import (
	"bytes"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"gopkg.in/yaml.v3"
)

// The scheduler examples of examples/sweep run here as the schedulers
// would run them: the Slurm scripts with bash, once per array task with
// the variables Slurm sets in a task; the Kubernetes Jobs' commands with
// sh, once per completion index with JOB_COMPLETION_INDEX set, in a
// directory laid out as the pod's working directory. `enough` on the PATH
// is this test binary (TestMain). The merged output must equal, byte for
// byte, the sweep run in one piece with the same arguments.

const sweepExamples = "../../examples/sweep"

// schedulerEnv is the process's environment without any scheduler's
// variables, plus vars.
func schedulerEnv(vars ...string) []string {
	var env []string
	for _, kv := range os.Environ() {
		if !strings.HasPrefix(kv, "SLURM_") && !strings.HasPrefix(kv, "JOB_COMPLETION_INDEX=") {
			env = append(env, kv)
		}
	}
	return append(env, vars...)
}

// run runs a command in dir and fails the test on a non-zero status.
func run(t *testing.T, dir string, env []string, name string, args ...string) {
	t.Helper()
	cmd := exec.Command(name, args...)
	cmd.Dir, cmd.Env = dir, env
	var out bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &out
	if err := cmd.Run(); err != nil {
		t.Fatalf("%s %s: %v\n%s", name, strings.Join(args, " "), err, out.String())
	}
}

// unsharded returns the arguments of the sweep in one piece: the sweep's
// command as the example writes it (from "enough sweep", at the start of
// a line or after "&&", to the end of the command), without the sharding, the output file, the workers and -q,
// and with -f csv.
func unsharded(t *testing.T, command string) []string {
	t.Helper()
	command = strings.ReplaceAll(command, "\\\n", " ")
	loc := regexp.MustCompile(`(?m)^\s*(\S.*&&\s*)?enough sweep `).FindStringIndex(command)
	if loc == nil {
		t.Fatalf("no enough sweep command at the start of a line in %q", command)
	}
	command = command[loc[1]-len("sweep "):]
	if j := strings.Index(command, "||"); j >= 0 {
		command = command[:j]
	}
	var args []string
	fields := strings.Fields(command)
	for k := 0; k < len(fields); k++ {
		switch f := strings.Trim(fields[k], `"'`); f {
		case "--shard", "--shards", "-o", "--workers":
			k++
		case "--quiet", "-q":
		default:
			args = append(args, f)
		}
	}
	return append(args, "-f", "csv")
}

// sameFile fails the test unless two files hold the same bytes.
func sameFile(t *testing.T, got, want string) {
	t.Helper()
	g, err := os.ReadFile(got)
	if err != nil {
		t.Fatal(err)
	}
	w, err := os.ReadFile(want)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(g, w) {
		t.Fatalf("%s differs from %s:\n%s\nwant\n%s", got, want, g, w)
	}
	if n := bytes.Count(w, []byte("\n")); n < 10 {
		t.Fatalf("%s has only %d lines", want, n)
	}
}

// TestSlurmExample runs slurm-sweep.sh as the tasks of its array (the
// range of its #SBATCH --array line) and slurm-merge.sh after them.
func TestSlurmExample(t *testing.T) {
	if _, err := exec.LookPath("bash"); err != nil {
		t.Skip("no bash to run the Slurm scripts")
	}
	script, err := os.ReadFile(filepath.Join(sweepExamples, "slurm-sweep.sh"))
	if err != nil {
		t.Fatal(err)
	}
	m := regexp.MustCompile(`(?m)^#SBATCH --array=(\d+)-(\d+)$`).FindStringSubmatch(string(script))
	if m == nil {
		t.Fatal("slurm-sweep.sh has no #SBATCH --array=LO-HI line")
	}
	lo, _ := strconv.Atoi(m[1])
	hi, _ := strconv.Atoi(m[2])
	dir := t.TempDir()
	for _, f := range []string{"falls-visits.yaml", "slurm-sweep.sh", "slurm-merge.sh"} {
		copyFile(t, filepath.Join(sweepExamples, f), filepath.Join(dir, f))
	}
	for task := lo; task <= hi; task++ {
		// What Slurm sets in each task of sbatch --array=LO-HI (sbatch(1),
		// "OUTPUT ENVIRONMENT VARIABLES").
		run(t, dir, schedulerEnv(
			"SLURM_JOB_ID="+strconv.Itoa(9100+task), "SLURM_ARRAY_JOB_ID=9100",
			"SLURM_ARRAY_TASK_ID="+strconv.Itoa(task), "SLURM_ARRAY_TASK_MIN="+m[1], "SLURM_ARRAY_TASK_MAX="+m[2],
			"SLURM_ARRAY_TASK_COUNT="+strconv.Itoa(hi-lo+1), "SLURM_ARRAY_TASK_STEP=1", "SLURM_CPUS_PER_TASK=2",
		), "bash", "slurm-sweep.sh")
	}
	shards, _ := filepath.Glob(filepath.Join(dir, "shards", "*.jsonl"))
	if len(shards) != hi-lo+1 {
		t.Fatalf("%d shard files; want %d", len(shards), hi-lo+1)
	}
	run(t, dir, schedulerEnv("SLURM_JOB_ID=9200"), "bash", "slurm-merge.sh")
	args := append(unsharded(t, string(script)), "-o", "whole.csv")
	run(t, dir, schedulerEnv(), "enough", args...)
	sameFile(t, filepath.Join(dir, "sweep.csv"), filepath.Join(dir, "whole.csv"))
}

// job is what the test reads of a Kubernetes Job.
type job struct {
	Kind string `yaml:"kind"`
	Spec struct {
		CompletionMode string `yaml:"completionMode"`
		Completions    int    `yaml:"completions"`
		Template       struct {
			Spec struct {
				Containers []struct {
					Command []string `yaml:"command"`
					Args    []string `yaml:"args"`
				} `yaml:"containers"`
			} `yaml:"spec"`
		} `yaml:"template"`
	} `yaml:"spec"`
}

// readJob returns the Job of a manifest (its other documents skipped).
func readJob(t *testing.T, name string) job {
	t.Helper()
	f, err := os.Open(filepath.Join(sweepExamples, name))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	dec := yaml.NewDecoder(f)
	for {
		var j job
		if err := dec.Decode(&j); err != nil {
			t.Fatalf("%s: no Job: %v", name, err)
		}
		if j.Kind == "Job" {
			if len(j.Spec.Template.Spec.Containers) != 1 {
				t.Fatalf("%s: want one container", name)
			}
			return j
		}
	}
}

// TestKubernetesExample runs the indexed Job's command once per
// completion index, then the merge Job's.
func TestKubernetesExample(t *testing.T) {
	if _, err := exec.LookPath("sh"); err != nil {
		t.Skip("no sh to run the containers' commands")
	}
	sweepJob, mergeJob := readJob(t, "k8s-sweep-job.yaml"), readJob(t, "k8s-merge-job.yaml")
	if sweepJob.Spec.CompletionMode != "Indexed" || sweepJob.Spec.Completions < 2 {
		t.Fatalf("the sweep Job is not indexed with several completions: %+v", sweepJob.Spec)
	}
	// The pod's working directory: the shared volume, with the study
	// mounted in study/.
	dir := t.TempDir()
	if err := os.Mkdir(filepath.Join(dir, "study"), 0o755); err != nil {
		t.Fatal(err)
	}
	copyFile(t, filepath.Join(sweepExamples, "falls-visits.yaml"), filepath.Join(dir, "study", "falls-visits.yaml"))
	c := sweepJob.Spec.Template.Spec.Containers[0]
	argv := append(append([]string{}, c.Command...), c.Args...)
	for i := range sweepJob.Spec.Completions {
		// Kubernetes sets JOB_COMPLETION_INDEX, from 0, in each pod of an
		// indexed Job (documentation, "Jobs", completion mode).
		run(t, dir, schedulerEnv("JOB_COMPLETION_INDEX="+strconv.Itoa(i)), argv[0], argv[1:]...)
	}
	shards, _ := filepath.Glob(filepath.Join(dir, "shards", "*.jsonl"))
	if len(shards) != sweepJob.Spec.Completions {
		t.Fatalf("%d shard files; want %d", len(shards), sweepJob.Spec.Completions)
	}
	mc := mergeJob.Spec.Template.Spec.Containers[0]
	margv := append(append([]string{}, mc.Command...), mc.Args...)
	run(t, dir, schedulerEnv(), margv[0], margv[1:]...)
	args := append(unsharded(t, strings.Join(c.Args, " ")), "-o", "whole.csv")
	run(t, dir, schedulerEnv(), "enough", args...)
	sameFile(t, filepath.Join(dir, "sweep.csv"), filepath.Join(dir, "whole.csv"))
}

func copyFile(t *testing.T, from, to string) {
	t.Helper()
	data, err := os.ReadFile(from)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(to, data, 0o644); err != nil {
		t.Fatal(err)
	}
}
