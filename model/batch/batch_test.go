package batch

import (
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/mirabilis-astro/mirabilis/model/config"
)

// testConfig writes the two-armed test galaxy's fit configuration and an empty catalog
// into a new folder and returns the configuration's path.
func testConfig(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	data, err := os.ReadFile(filepath.Join("..", "..", "testdata", "mock", "two-arms-fit.toml"))
	if err != nil {
		t.Fatal(err)
	}
	data = append(data, "\n[sampler]\nseed = 40\n"...)
	path := filepath.Join(dir, "fit.toml")
	if err := os.WriteFile(path, data, 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "sources.csv"), nil, 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

func TestChainsScript(t *testing.T) {
	path := testConfig(t)
	p, err := NewChains(path, "", 3)
	if err != nil {
		t.Fatal(err)
	}
	if want := strings.TrimSuffix(path, ".toml") + "-chains"; p.Dir != want {
		t.Errorf("folder %s, want %s", p.Dir, want)
	}
	for i, task := range p.Tasks {
		if task.Seed != 40+uint64(i) {
			t.Errorf("task %d seed %d, want %d", i, task.Seed, 40+i)
		}
	}
	s := Slurm{Time: "02:00:00", CPUs: 4, Partition: "short", Program: "/opt/mirabilis dir/mirabilis"}
	if err := p.Write(s, false); err != nil {
		t.Fatal(err)
	}
	script := filepath.Join(p.Dir, ScriptName)
	data, err := os.ReadFile(script)
	if err != nil {
		t.Fatal(err)
	}
	text := string(data)
	// The directives Slurm reads (sbatch(1)): an array of three, the limit, the
	// cores, the partition, the warning signal to the batch shell, requeueing.
	for _, want := range []string{
		"#SBATCH --array=0-2\n", "#SBATCH --time=02:00:00\n", "#SBATCH --cpus-per-task=4\n",
		"#SBATCH --partition=short\n", "#SBATCH --signal=B:USR1@300\n", "#SBATCH --requeue\n",
		"mirabilis='/opt/mirabilis dir/mirabilis'\n", "stopped_early=75",
	} {
		if !strings.Contains(text, want) {
			t.Errorf("script lacks %q", want)
		}
	}
	if fi, err := os.Stat(script); err != nil || fi.Mode().Perm() != 0o755 {
		t.Errorf("script mode %v, %v; want 0755", fi.Mode().Perm(), err)
	}
	if out, err := exec.Command("bash", "-n", script).CombinedOutput(); err != nil {
		t.Errorf("bash -n: %v\n%s", err, out)
	}
	// Task i picks its own run directory and seed when bash runs the lists.
	probe := strings.Split(text, "\ni=${SLURM_ARRAY_TASK_ID")[0] + "\necho ${run_dirs[2]} ${seeds[2]}\n"
	out, err := exec.Command("bash", "-c", probe).Output()
	if err != nil {
		t.Fatal(err)
	}
	if got, want := strings.TrimSpace(string(out)), p.Tasks[2].RunDir+" 42"; got != want {
		t.Errorf("task 2 reads %q, want %q", got, want)
	}
	if err := p.Write(s, false); err == nil || !strings.Contains(err.Error(), "--force") {
		t.Errorf("writing over a batch folder: %v, want a refusal naming --force", err)
	}
}

func TestSlurmSettings(t *testing.T) {
	p := &Plan{Kind: Chains, Base: "/x/fit.toml", Dir: "/x/b", Tasks: []Task{{Name: "chain-1"}}}
	for _, c := range []struct {
		s    Slurm
		fail string
	}{
		{Slurm{Time: "1:00", Program: "m"}, "HH:MM:SS"},
		{Slurm{Time: "01:61:00", Program: "m"}, "59"},
		{Slurm{Time: "00:00:00", Program: "m"}, "positive"},
		{Slurm{Time: "00:10:00", Warning: 6 * time.Minute, Program: "m"}, "half"},
		{Slurm{Partition: "a b", Program: "m"}, "partition"},
		{Slurm{}, "program"},
	} {
		_, err := p.Script(c.s)
		if err == nil || !strings.Contains(err.Error(), c.fail) {
			t.Errorf("%+v: %v, want an error mentioning %q", c.s, err, c.fail)
		}
	}
	b, err := p.Script(Slurm{Time: "1-00:06:00", Program: "m"})
	if err != nil || !strings.Contains(string(b), "--signal=B:USR1@300") {
		t.Errorf("a day's limit: %v", err)
	}
	b, err = p.Script(Slurm{Time: "00:06:00", Program: "m"})
	if err != nil || !strings.Contains(string(b), "--signal=B:USR1@120") {
		t.Errorf("a short limit warns a third ahead: %v\n%s", err, b)
	}
}

func TestVariants(t *testing.T) {
	path := testConfig(t)
	vpath := filepath.Join(filepath.Dir(path), "variants.toml")
	os.WriteFile(vpath, []byte(`
[[variant]]
name = "power"
set = { "rotation.curve" = "power", "params.alpha" = "uniform(-0.3, 0.3)" }
remove = ["params.dTheta_dR"]

[[variant]]
name = "kinked"
set = { "arm.Corvid.pitch2" = "uniform(4, 25)", "arm.Corvid.kink" = "uniform(0, 90)" }

[[variant]]
name = "one-arm"
remove = ["arm.Tamarisk"]
`), 0o644)
	p, err := NewVariants(path, vpath, "")
	if err != nil {
		t.Fatal(err)
	}
	if len(p.Tasks) != 3 {
		t.Fatalf("%d tasks, want 3", len(p.Tasks))
	}
	if err := p.Write(Slurm{Program: "m"}, false); err != nil {
		t.Fatal(err)
	}
	load := func(i int) *config.Config {
		c, err := config.Load(p.Tasks[i].Config)
		if err != nil {
			t.Fatalf("variant %d: %v", i, err)
		}
		return c
	}
	if c := load(0); c.Rotation.Curve != "power" {
		t.Errorf("power variant has curve %q", c.Rotation.Curve)
	}
	if c := load(1); !c.Arms[0].Kinked() || c.Arms[1].Kinked() {
		t.Errorf("kinked variant: Corvid kinked %v, Tamarisk kinked %v", c.Arms[0].Kinked(), c.Arms[1].Kinked())
	}
	c := load(2)
	if len(c.Arms) != 1 || c.Arms[0].Name != "Corvid" {
		t.Errorf("one-arm variant has arms %v", c.Arms)
	}
	base, _ := config.Load(path)
	if c.Catalog != base.Catalog {
		t.Errorf("variant catalog %s, want the base's %s", c.Catalog, base.Catalog)
	}

	for _, bad := range []struct{ text, want string }{
		{"[[variant]]\nname = \"x\"\nset = { \"arm.Nowhere.pitch\" = 3 }\n", `no arm named "Nowhere"`},
		{"[[variant]]\nname = \"x y\"\n", "name"},
		{"[[variant]]\nname = \"x\"\n[[variant]]\nname = \"X\"\n", "twice"},
		{"[[variant]]\nname = \"x\"\nset = { \"rotation.curve\" = \"spline\" }\n", "not valid"},
		{"[[variant]]\nname = \"x\"\nremove = [\"params.nothing\"]\n", "does not set"},
		{"[[variant]]\nnom = \"x\"\n", "nom"},
		{"", "no [[variant]]"},
	} {
		os.WriteFile(vpath, []byte(bad.text), 0o644)
		_, err := NewVariants(path, vpath, "")
		if err == nil || !strings.Contains(err.Error(), bad.want) {
			t.Errorf("variants %q: %v, want an error mentioning %q", bad.text, err, bad.want)
		}
	}
}
