// Package mocktest sets up the tests that fit a mock catalog: it draws a catalog from the
// two-armed test galaxy of testdata/mock and writes it with the galaxy's fit configuration.
// It is used by the tests of model/fit and cmd/mirabilis.
package mocktest

import (
	"os"
	"path/filepath"
	"runtime"
	"testing"

	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/config"
	"github.com/mirabilis-astro/mirabilis/model/mock"
)

// File returns the path of a file of testdata/mock, such as "two-arms.toml" (the galaxy,
// whose fixed parameters are the mock's truth) or "two-arms-fit.toml" (its fit with broad
// priors).
func File(name string) string {
	_, here, _, _ := runtime.Caller(0)
	return filepath.Join(filepath.Dir(here), "..", "..", "testdata", "mock", name)
}

// Catalog draws a mock catalog from the two-armed test galaxy with the given [survey]
// table and writes it into dir as sources.csv, next to fit.toml, the galaxy's fit
// configuration with extra appended. spec makes the model of the mock's configuration
// (fit.SpecFromConfig; it is passed in so that package fit's own tests can use Catalog). It
// returns the path of fit.toml and the mock.
func Catalog(t testing.TB, dir, survey, extra string, spec func(*config.Config) (*model.Spec, error)) (string, *mock.Model) {
	t.Helper()
	desc, err := os.ReadFile(File("two-arms.toml"))
	if err != nil {
		t.Fatal(err)
	}
	m, err := mock.Parse(append(desc, survey...), "galaxy.toml", dir)
	if err != nil {
		t.Fatal(err)
	}
	s, err := spec(m.Config)
	if err != nil {
		t.Fatal(err)
	}
	data, _, err := m.Render(s, nil)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "sources.csv"), data, 0o644); err != nil {
		t.Fatal(err)
	}
	body, err := os.ReadFile(File("two-arms-fit.toml"))
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, "fit.toml")
	if err := os.WriteFile(path, append(body, extra...), 0o644); err != nil {
		t.Fatal(err)
	}
	return path, m
}
