package batch

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"time"

	"github.com/mirabilis-astro/mirabilis/internal/atomicfile"
)

// Slurm holds the scheduler settings written into the batch script. The zero value asks for
// one CPU, an hour per task and the cluster's default partition.
type Slurm struct {
	// Time is each task's time limit, as Slurm writes it (HH:MM:SS, or D-HH:MM:SS);
	// default 01:00:00.
	Time string
	// CPUs is the number of cores per task, and the fit's thread count; default 1.
	CPUs int
	// Partition is the partition to submit to; default the cluster's.
	Partition string
	// Warning is how long before the time limit Slurm signals the task, so that the fit
	// can checkpoint and the task requeue; default 5 minutes, at most a third of Time.
	Warning time.Duration
	// Program is the path of the mirabilis executable the tasks run.
	Program string
}

var slurmTime = regexp.MustCompile(`^(?:(\d+)-)?(\d{1,2}):(\d{2}):(\d{2})$`)

// limit returns the time limit as a duration, checking its form.
func (s *Slurm) limit() (time.Duration, error) {
	t := s.Time
	if t == "" {
		t = "01:00:00"
	}
	m := slurmTime.FindStringSubmatch(t)
	if m == nil {
		return 0, fmt.Errorf("time limit %q: want HH:MM:SS or D-HH:MM:SS", s.Time)
	}
	var f [4]int
	for i, v := range m[1:] {
		if v != "" {
			f[i], _ = strconv.Atoi(v)
		}
	}
	if f[2] > 59 || f[3] > 59 {
		return 0, fmt.Errorf("time limit %q: minutes and seconds run from 00 to 59", s.Time)
	}
	d := time.Duration(f[0])*24*time.Hour + time.Duration(f[1])*time.Hour + time.Duration(f[2])*time.Minute + time.Duration(f[3])*time.Second
	if d <= 0 {
		return 0, fmt.Errorf("time limit %q: want a positive duration", s.Time)
	}
	return d, nil
}

// Script returns the batch script of the plan.
func (p *Plan) Script(s Slurm) ([]byte, error) {
	limit, err := s.limit()
	if err != nil {
		return nil, err
	}
	if s.Time == "" {
		s.Time = "01:00:00"
	}
	if s.CPUs == 0 {
		s.CPUs = 1
	}
	if s.CPUs < 0 {
		return nil, fmt.Errorf("cpus per task: want a positive number, got %d", s.CPUs)
	}
	warn := s.Warning
	if warn == 0 {
		warn = min(5*time.Minute, limit/3)
	}
	if warn < time.Second || warn > limit/2 {
		return nil, fmt.Errorf("warning %s before the time limit %s: want at least a second and at most half the limit", warn, s.Time)
	}
	if s.Program == "" {
		return nil, fmt.Errorf("the path of the mirabilis program is not known")
	}
	if strings.ContainsAny(s.Partition, " \t\n'\"$`\\") {
		return nil, fmt.Errorf("partition %q: not a partition name", s.Partition)
	}
	if len(p.Tasks) == 0 {
		return nil, fmt.Errorf("the plan has no tasks")
	}

	var b bytes.Buffer
	w := func(format string, args ...any) { fmt.Fprintf(&b, format, args...) }
	w("#!/bin/bash\n")
	w("# %s of %s, one array task per run directory (written by mirabilis batch).\n", describe(p), filepath.Base(p.Base))
	w("#\n")
	w("#   submit:   sbatch %s\n", quote(filepath.Join(p.Dir, ScriptName)))
	w("#   watch:    squeue --me   and   tail %s\n", quote(filepath.Join(p.Dir, "TASK", "log.txt")))
	w("#   results:  mirabilis report %s\n", reportArgs(p))
	w("#\n")
	w("# A task that reaches its time limit, or is pre-empted, is told so %s ahead; its fit\n", warn)
	w("# then finishes the step in flight, writes its checkpoint and exits with status %d,\n", StoppedEarly)
	w("# and the task puts itself back in the queue. When it starts again it resumes the run\n")
	w("# exactly where it stopped. Edit freely: the lists below are all there is to a task.\n")
	w("#SBATCH --job-name=mirabilis-%s\n", jobName(p))
	w("#SBATCH --array=0-%d\n", len(p.Tasks)-1)
	w("#SBATCH --time=%s\n", s.Time)
	w("#SBATCH --cpus-per-task=%d\n", s.CPUs)
	if s.Partition != "" {
		w("#SBATCH --partition=%s\n", s.Partition)
	}
	w("#SBATCH --signal=B:USR1@%d\n", int(warn.Seconds()))
	w("#SBATCH --requeue\n")
	w("#SBATCH --open-mode=append\n")
	w("#SBATCH --output=%s\n", filepath.Join(p.Dir, "slurm-%A_%a.out"))
	w("\nset -u\n")
	w("mirabilis=%s\n", quote(s.Program))
	w("stopped_early=%d  # the fit's exit status when it stopped and can be resumed\n\n", StoppedEarly)

	list := func(name, comment string, value func(t Task) string) {
		w("# %s\n%s=(\n", comment, name)
		for _, t := range p.Tasks {
			w("\t%s\n", quote(value(t)))
		}
		w(")\n")
	}
	list("configs", "The configuration each task fits.", func(t Task) string { return t.Config })
	list("run_dirs", "Each task's run directory.", func(t Task) string { return t.RunDir })
	list("seeds", "The seed of each task's random streams.", func(t Task) string { return strconv.FormatUint(t.Seed, 10) })
	if p.Kind == Mocks {
		list("models", "The model each mock catalog is drawn from (its true parameters and survey).", func(t Task) string { return t.Model })
		list("catalogs", "Where each mock catalog goes; the fit's configuration reads it.", func(t Task) string { return t.Catalog })
		list("truths", "Where the true distances and memberships of each mock go.", func(t Task) string { return t.Truth })
	}

	w(`
i=${SLURM_ARRAY_TASK_ID:?submit this script with sbatch}
echo "mirabilis task $i (job ${SLURM_JOB_ID:-?}, start ${SLURM_RESTART_COUNT:-0}) on $(hostname) at $(date)"
`)
	if p.Kind == Mocks {
		w(`
# Draw the mock catalog once; a requeued task keeps the one it drew.
if [ ! -s "${catalogs[$i]}" ]; then
	"$mirabilis" simulate "${models[$i]}" --seed "${seeds[$i]}" --out "${catalogs[$i]}" --truth "${truths[$i]}" --force || exit
fi
`)
	}
	w(`
args=(fit "${configs[$i]}" --out "${run_dirs[$i]}" --seed "${seeds[$i]}" --threads "${SLURM_CPUS_PER_TASK:-1}")
if [ -f "${run_dirs[$i]}/run.json" ]; then
	args+=(--resume)
fi

# The fit runs in the background so that this shell can pass Slurm's warning on to it.
"$mirabilis" "${args[@]}" &
fit=$!
trap 'kill -USR1 "$fit" 2>/dev/null' USR1 TERM
wait "$fit"
status=$?
while kill -0 "$fit" 2>/dev/null; do # wait returns early when a signal arrives
	wait "$fit"
	status=$?
done

if [ "$status" -eq "$stopped_early" ]; then
	echo "mirabilis task $i stopped early; back in the queue to resume"
	scontrol requeue "${SLURM_ARRAY_JOB_ID:-$SLURM_JOB_ID}_$i"
	exit 0
fi
exit "$status"
`)
	return b.Bytes(), nil
}

// Write lays out the plan's folder: every file the tasks need (variant configurations,
// the mocks' models and fit configurations) and the batch script, each written
// atomically. The folder must be new or empty unless force is set.
func (p *Plan) Write(s Slurm, force bool) error {
	if p.Exists() && !force {
		return fmt.Errorf("%s exists and is not empty: choose another folder, or give --force to write over it", p.Dir)
	}
	script, err := p.Script(s)
	if err != nil {
		return err
	}
	if err := atomicfile.MkdirAll(p.Dir); err != nil {
		return err
	}
	for _, t := range p.Tasks {
		for path, data := range t.files {
			if err := atomicfile.MkdirAll(filepath.Dir(path)); err != nil {
				return err
			}
			if err := atomicfile.Write(path, data); err != nil {
				return err
			}
		}
	}
	path := filepath.Join(p.Dir, ScriptName)
	if err := atomicfile.Write(path, script); err != nil {
		return err
	}
	return chmodExec(path)
}

// chmodExec makes the script executable by everyone who may read it.
func chmodExec(path string) error {
	if err := os.Chmod(path, 0o755); err != nil {
		return fmt.Errorf("making %s executable: %w", path, err)
	}
	return nil
}

func describe(p *Plan) string {
	n := len(p.Tasks)
	switch p.Kind {
	case Variants:
		return fmt.Sprintf("%d variants", n)
	case Mocks:
		return fmt.Sprintf("A calibration set of %d mock catalogs", n)
	}
	return fmt.Sprintf("%d independent chains", n)
}

func reportArgs(p *Plan) string {
	if p.Kind == Mocks {
		return "--coverage " + quote(p.Dir) + "/mock-*/run"
	}
	if p.Kind == Variants {
		return "--side-by-side " + quote(p.Dir) + "/variant-*   (then: mirabilis compare)"
	}
	return quote(p.Dir) + "/chain-*"
}

var nameUnsafe = regexp.MustCompile(`[^A-Za-z0-9._-]+`)

func jobName(p *Plan) string {
	base := strings.TrimSuffix(filepath.Base(p.Base), filepath.Ext(p.Base))
	return nameUnsafe.ReplaceAllString(base, "_") + "-" + string(p.Kind)
}

// quote returns s as one word for bash: bare when it is made of safe characters, in
// single quotes otherwise.
func quote(s string) string {
	if s != "" && !strings.ContainsFunc(s, func(r rune) bool {
		return !(r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || strings.ContainsRune("/._-+=:,@%", r))
	}) {
		return s
	}
	return "'" + strings.ReplaceAll(s, "'", `'\''`) + "'"
}
