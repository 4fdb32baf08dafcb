package main

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/mirabilis-astro/mirabilis/model/config"
	"github.com/mirabilis-astro/mirabilis/model/fit"
)

// shortFit fits the configuration at path with opts, failing the test on any error.
func shortFit(t *testing.T, path string, opts fit.Options) *fit.Outcome {
	t.Helper()
	cfg, err := config.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	out, err := fit.Fit(context.Background(), cfg, opts)
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// variantOf writes name next to the configuration at path: a copy with the line old
// replaced by replacement and extra appended, and returns its path. The test fails if
// the configuration has no such line.
func variantOf(t *testing.T, path, name, old, replacement, extra string) string {
	t.Helper()
	body, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	text := strings.Replace(string(body), old, replacement, 1)
	if text == string(body) {
		t.Fatalf("%s has no line %s to change", path, old)
	}
	out := filepath.Join(filepath.Dir(path), name)
	if err := os.WriteFile(out, []byte(text+extra), 0o644); err != nil {
		t.Fatal(err)
	}
	return out
}
