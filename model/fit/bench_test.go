package fit

import (
	"os"
	"testing"

	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/config"
)

func BenchmarkDemoLogDensity(b *testing.B) {
	dir := os.Getenv("MIRABILIS_BENCH_DIR")
	if dir == "" {
		b.Skip("set MIRABILIS_BENCH_DIR to a folder with demo-fit.toml and sources.csv")
	}
	cfg, err := config.Load(dir + "/demo-fit.toml")
	if err != nil {
		b.Fatal(err)
	}
	cat, err := catalog.ReadFile(cfg.Catalog)
	if err != nil {
		b.Fatal(err)
	}
	job, err := Prepare(cfg, cat)
	if err != nil {
		b.Fatal(err)
	}
	x := job.Start()
	p, err := job.Post.Params(x)
	if err != nil {
		b.Fatal(err)
	}
	st, err := job.Like.BuildLayouts([]*model.Params{p}, 0)
	if err != nil {
		b.Fatal(err)
	}
	b.Logf("nodes: median %d total %d", st.MedianNodes, st.TotalNodes)
	b.ResetTimer()
	for range b.N {
		job.Post.LogDensity(x)
	}
}
