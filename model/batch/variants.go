package batch

import (
	"bytes"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"sort"
	"strings"

	"github.com/pelletier/go-toml/v2"

	"github.com/mirabilis-astro/mirabilis/model/config"
)

// VariantsHelp describes the variants file.
const VariantsHelp = `A variants file lists runs that each change some settings of a base configuration:

  # One [[variant]] per run: a name (letters, digits, '-', '_', '.') and the
  # settings it changes, by path: TABLE.KEY, or arm.NAME.KEY for one arm.
  [[variant]]
  name = "power-law"
  set = { "rotation.curve" = "power", "params.alpha" = "uniform(-0.3, 0.3)" }
  remove = ["params.dTheta_dR"]     # settings or whole arms left out

  [[variant]]
  name = "kinked-lantern"
  set = { "arm.Lantern.pitch2" = "uniform(4, 25)", "arm.Lantern.kink" = "uniform(0, 90)" }

  [[variant]]
  name = "three-arms"
  remove = ["arm.Halcyon"]

Each variant's configuration is written to configs/NAME.toml in the batch folder and
checked as "mirabilis fit" would check it before anything is submitted.`

type variantsFile struct {
	Variant []struct {
		Name   string         `toml:"name"`
		Set    map[string]any `toml:"set"`
		Remove []string       `toml:"remove"`
	} `toml:"variant"`
}

var variantName = regexp.MustCompile(`^[A-Za-z0-9][A-Za-z0-9._-]*$`)

// NewVariants plans one run for each variant in the variants file at vpath, each a copy of
// the configuration at path with the variant's settings changed. Every variant's
// configuration is checked, and all problems are reported at once.
func NewVariants(path, vpath, dir string) (*Plan, error) {
	cfg, p, err := newPlan(Variants, path, dir)
	if err != nil {
		return nil, err
	}
	base, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	data, err := os.ReadFile(vpath)
	if err != nil {
		return nil, fmt.Errorf("reading variants: %w", err)
	}
	var vf variantsFile
	dec := toml.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&vf); err != nil {
		var se *toml.StrictMissingError
		if errors.As(err, &se) {
			var lines []string
			for _, e := range se.Errors {
				line, col := e.Position()
				lines = append(lines, fmt.Sprintf("%s:%d:%d: unknown key %q: a variant has name, set and remove", vpath, line, col, strings.Join(e.Key(), ".")))
			}
			return nil, errors.New(strings.Join(lines, "\n"))
		}
		var de *toml.DecodeError
		if errors.As(err, &de) {
			line, col := de.Position()
			return nil, fmt.Errorf("%s:%d:%d: %s", vpath, line, col, de.Error())
		}
		return nil, fmt.Errorf("%s: %w", vpath, err)
	}
	if len(vf.Variant) == 0 {
		return nil, fmt.Errorf("%s: no [[variant]] tables\n\n%s", vpath, VariantsHelp)
	}
	var problems []string
	seen := map[string]bool{}
	for i, v := range vf.Variant {
		where := fmt.Sprintf("%s: variant %d", vpath, i+1)
		if v.Name != "" {
			where = fmt.Sprintf("%s: variant %q", vpath, v.Name)
		}
		switch {
		case !variantName.MatchString(v.Name):
			problems = append(problems, fmt.Sprintf("%s: name %q: want letters, digits, '-', '_' or '.', starting with a letter or digit", where, v.Name))
			continue
		case seen[strings.ToLower(v.Name)]:
			problems = append(problems, fmt.Sprintf("%s: the name is used twice", where))
			continue
		}
		seen[strings.ToLower(v.Name)] = true
		doc, err := applyVariant(base, cfg, v.Set, v.Remove)
		if err != nil {
			problems = append(problems, fmt.Sprintf("%s: %v", where, err))
			continue
		}
		cpath := filepath.Join(p.Dir, "configs", v.Name+".toml")
		if _, err := config.Parse(doc, cpath, filepath.Dir(cpath)); err != nil {
			problems = append(problems, fmt.Sprintf("%s: the changed configuration is not valid:\n%v", where, err))
			continue
		}
		p.Tasks = append(p.Tasks, Task{
			Name:   "variant-" + v.Name,
			Config: cpath,
			RunDir: filepath.Join(p.Dir, "variant-"+v.Name),
			Seed:   cfg.Sampler.Seed,
			files:  map[string][]byte{cpath: doc},
		})
	}
	if len(problems) > 0 {
		return nil, errors.New(strings.Join(problems, "\n"))
	}
	return p, nil
}

// applyVariant returns the configuration document base with the settings set and removed,
// the catalog made absolute, and a header saying what changed.
func applyVariant(base []byte, cfg *config.Config, set map[string]any, remove []string) ([]byte, error) {
	var doc map[string]any
	if err := toml.Unmarshal(base, &doc); err != nil {
		return nil, err
	}
	doc["catalog"] = cfg.Catalog
	delete(doc, "output")
	var header []string
	for _, key := range remove {
		if err := removeKey(doc, key); err != nil {
			return nil, err
		}
		header = append(header, "# removed: "+key)
	}
	keys := make([]string, 0, len(set))
	for k := range set {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, key := range keys {
		if err := setKey(doc, key, set[key]); err != nil {
			return nil, err
		}
		header = append(header, fmt.Sprintf("# set: %s = %v", key, set[key]))
	}
	out, err := toml.Marshal(doc)
	if err != nil {
		return nil, err
	}
	h := "# A variant of " + cfg.File + " written by mirabilis batch.\n" + strings.Join(header, "\n") + "\n\n"
	return append([]byte(h), out...), nil
}

// locate returns the table that holds the last part of key, creating tables on the way when
// create is set. "arm.NAME.KEY" addresses the arm named NAME.
func locate(doc map[string]any, key string, create bool) (map[string]any, string, error) {
	parts := strings.Split(key, ".")
	if slices.Contains(parts, "") {
		return nil, "", fmt.Errorf("setting %q: want TABLE.KEY, KEY or arm.NAME.KEY", key)
	}
	if parts[0] == "arm" {
		if len(parts) < 2 {
			return nil, "", fmt.Errorf("setting %q: want arm.NAME or arm.NAME.KEY", key)
		}
		arms, _ := doc["arm"].([]any)
		for _, a := range arms {
			t, ok := a.(map[string]any)
			if ok && fmt.Sprint(t["name"]) == parts[1] {
				if len(parts) == 2 {
					return nil, parts[1], nil
				}
				if len(parts) != 3 {
					return nil, "", fmt.Errorf("setting %q: want arm.NAME.KEY", key)
				}
				return t, parts[2], nil
			}
		}
		return nil, "", fmt.Errorf("setting %q: the configuration has no arm named %q", key, parts[1])
	}
	t := doc
	for _, p := range parts[:len(parts)-1] {
		next, ok := t[p].(map[string]any)
		if !ok {
			if _, exists := t[p]; exists || !create {
				return nil, "", fmt.Errorf("setting %q: %q is not a table of the configuration", key, p)
			}
			next = map[string]any{}
			t[p] = next
		}
		t = next
	}
	return t, parts[len(parts)-1], nil
}

func setKey(doc map[string]any, key string, v any) error {
	t, last, err := locate(doc, key, true)
	if err != nil {
		return err
	}
	if t == nil {
		return fmt.Errorf("setting %q: an arm is changed key by key (arm.NAME.KEY)", key)
	}
	t[last] = v
	return nil
}

func removeKey(doc map[string]any, key string) error {
	t, last, err := locate(doc, key, false)
	if err != nil {
		return err
	}
	if t == nil { // a whole arm
		arms := doc["arm"].([]any)
		kept := arms[:0]
		for _, a := range arms {
			if m, ok := a.(map[string]any); !ok || fmt.Sprint(m["name"]) != last {
				kept = append(kept, a)
			}
		}
		doc["arm"] = kept
		return nil
	}
	if _, ok := t[last]; !ok {
		return fmt.Errorf("remove %q: the configuration does not set it", key)
	}
	delete(t, last)
	return nil
}
