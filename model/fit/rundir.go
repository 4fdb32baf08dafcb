package fit

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strings"

	"github.com/mirabilis-astro/mirabilis/mcmc"
	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/config"
)

// Run is a run directory opened for reading: its configuration and catalog prepared as a
// Job with the quadrature layouts the run sampled with, its pilot stage and its chain.
type Run struct {
	// Dir is the run directory.
	Dir      string
	Manifest *Manifest
	Job      *Job
	Pilot    *PilotResult
	Chain    *mcmc.Chain
}

// OpenRun reads the run in dir: its resolved configuration, the catalog it names (which
// must still hash to what the run recorded), the pilot stage, the quadrature layouts of
// its last checkpoint and its chain. The run need not be finished; a run with no chain
// yet is an error saying so.
func OpenRun(dir string) (*Run, error) {
	m, err := ReadManifest(dir)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return nil, fmt.Errorf("%s is not a run directory (it has no %s)", dir, ManifestFile)
		}
		return nil, err
	}
	cfg, err := config.Load(filepath.Join(dir, ConfigFile))
	if err != nil {
		return nil, err
	}
	catHash, err := FileSHA256(cfg.Catalog)
	if err != nil {
		return nil, fmt.Errorf("run directory %s: its catalog: %w", dir, err)
	}
	if catHash != m.CatalogSHA256 {
		return nil, fmt.Errorf("run directory %s: the catalog %s changed since the run was made (SHA-256 %.12s…, the run recorded %.12s…)",
			dir, cfg.Catalog, catHash, m.CatalogSHA256)
	}
	cat, err := catalog.ReadFile(cfg.Catalog)
	if err != nil {
		return nil, err
	}
	job, err := Prepare(cfg, cat)
	if err != nil {
		return nil, err
	}
	r := &Run{Dir: dir, Manifest: m, Job: job}
	pilotPath := filepath.Join(dir, PilotFile)
	r.Pilot, err = readPilot(pilotPath, job.Post.Names())
	if errors.Is(err, fs.ErrNotExist) {
		return nil, fmt.Errorf("run directory %s has no pilot stage yet: %w", dir, err)
	}
	if err != nil {
		return nil, err
	}
	if err := job.Exclude(r.Pilot.Excluded); err != nil {
		return nil, fmt.Errorf("%s: %w", pilotPath, err)
	}
	ckPath := filepath.Join(dir, CheckpointFile)
	ck, err := mcmc.LoadCheckpoint(ckPath)
	if err != nil {
		return nil, fmt.Errorf("run directory %s: %w", dir, err)
	}
	if err := job.Like.UnmarshalLayouts(ck.Extra); err != nil {
		return nil, fmt.Errorf("%s: %w", ckPath, err)
	}
	if r.Chain, err = readRunChain(dir); err != nil {
		return nil, err
	}
	if r.Chain.Len() == 0 {
		return nil, fmt.Errorf("run directory %s: the chain has no steps yet", dir)
	}
	return r, nil
}

// Close releases the run's chain file.
func (r *Run) Close() error { return r.Chain.Close() }

// oldChainFile is where runs made before the chain became a .npy file kept it (CSV).
const oldChainFile = "chain.csv"

// readRunChain reads the chain of the run in dir, from an older run's CSV chain when it has
// no .npy one.
func readRunChain(dir string) (*mcmc.Chain, error) {
	path := filepath.Join(dir, ChainFile)
	if _, err := os.Stat(path); errors.Is(err, fs.ErrNotExist) {
		if _, err := os.Stat(filepath.Join(dir, oldChainFile)); err == nil {
			path = filepath.Join(dir, oldChainFile)
		}
	}
	return mcmc.ReadChainFile(path)
}

// Burn returns the number of kept rows left out as burn-in: burn when positive, else the
// configuration's, else a quarter of the chain, leaving at least two rows.
func (r *Run) Burn(burn int) int {
	rows := r.Chain.Len()
	if burn <= 0 {
		burn = r.Job.Config.Sampler.Burn
	}
	if burn <= 0 {
		burn = rows / 4
	}
	return max(0, min(burn, rows-2))
}

// Draw is one posterior draw: the sampled point, every parameter's value by name and the
// model's parameters. Params leaves out the selection's normalisation (see
// model.Spec.NewParamsUnnormalised): it serves memberships, distance posteriors, the
// arms and the motion, not ln L.
type Draw struct {
	X      []float64
	Values map[string]float64
	Params *model.Params
}

// Draws returns n posterior draws spread evenly over the kept rows after burn (see Burn),
// cycling through the walkers, so that the same run always gives the same draws. Points
// the model refuses are skipped.
func (r *Run) Draws(n, burn int) []Draw {
	return drawsOf(r.Job, r.Chain, n, r.Burn(burn))
}

func drawsOf(job *Job, c *mcmc.Chain, n, burn int) []Draw {
	rows, W := c.Len()-burn, c.Walkers()
	n = min(n, rows*W)
	out := make([]Draw, 0, n)
	for i := range n {
		x := c.Position(burn+i*rows/n, i%W, nil)
		vals := job.Post.Values(x)
		p, err := job.Spec.NewParamsUnnormalised(vals)
		if err != nil {
			continue
		}
		out = append(out, Draw{X: x, Values: vals, Params: p})
	}
	return out
}

// Summary summarises the run's chain after burn (see Burn).
func (r *Run) Summary(burn int) (*Summary, error) {
	cfg := *r.Job.Config
	cfg.Sampler.Burn = r.Burn(burn)
	job := *r.Job
	job.Config = &cfg
	return Summarise(&job, r.Chain, nil, r.Pilot)
}

// SameModel checks that runs fit the same model to the same catalog, so that their
// chains may be merged: the configurations may differ only in their [sampler] settings
// and output folder, and the catalogs must hash alike. The error names the first
// difference.
func SameModel(runs []*Run) error {
	for _, r := range runs[1:] {
		a, b := runs[0], r
		if a.Manifest.CatalogSHA256 != b.Manifest.CatalogSHA256 {
			return fmt.Errorf("runs %s and %s fit different catalogs (%s, SHA-256 %.12s…; %s, SHA-256 %.12s…)",
				a.Dir, b.Dir, a.Job.Config.Catalog, a.Manifest.CatalogSHA256, b.Job.Config.Catalog, b.Manifest.CatalogSHA256)
		}
		la, lb := modelLines(a.Job.Config), modelLines(b.Job.Config)
		for i := range max(len(la), len(lb)) {
			var x, y string
			if i < len(la) {
				x = la[i]
			}
			if i < len(lb) {
				y = lb[i]
			}
			if x != y {
				return fmt.Errorf("runs %s and %s have different configurations: %q in %s, %q in %s",
					a.Dir, b.Dir, x, filepath.Join(a.Dir, ConfigFile), y, filepath.Join(b.Dir, ConfigFile))
			}
		}
	}
	return nil
}

// modelLines returns the lines of a resolved configuration that describe the model: no
// comments, no blank lines, no [sampler] table and no output folder.
func modelLines(c *config.Config) []string {
	var out []string
	sc := bufio.NewScanner(bytes.NewReader(c.Resolved()))
	inSampler := false
	for sc.Scan() {
		line := strings.TrimSpace(sc.Text())
		switch {
		case line == "" || strings.HasPrefix(line, "#"):
			continue
		case strings.HasPrefix(line, "["):
			inSampler = line == "[sampler]" || strings.HasPrefix(line, "[sampler.")
		case inSampler, strings.HasPrefix(line, "output"):
			continue
		}
		if !inSampler {
			out = append(out, line)
		}
	}
	return out
}

// Merged returns the runs' chains side by side as one chain (see mcmc.MergeChains), each
// run's walkers after the previous run's; the runs must fit the same model (SameModel).
func Merged(runs []*Run) (*mcmc.Chain, error) {
	if err := SameModel(runs); err != nil {
		return nil, err
	}
	chains := make([]*mcmc.Chain, len(runs))
	for i, r := range runs {
		chains[i] = r.Chain
	}
	return mcmc.MergeChains(chains...)
}
