package fit

import (
	"os"
	"runtime"
	"testing"

	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/config"
)

// BenchmarkDemoLogDensity evaluates the log posterior of the demo's catalog at its starting
// point, on one thread; ns/node is wall time, cpu-ns/node the thread's CPU time per node.
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
	runtime.LockOSThread()
	defer runtime.UnlockOSThread()
	b.ReportAllocs()
	b.ResetTimer()
	cpu0, cpuOK := threadCPU()
	for range b.N {
		job.Post.LogDensity(x)
	}
	cpu1, _ := threadCPU()
	b.StopTimer()
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(st.TotalNodes), "ns/node")
	if cpuOK {
		b.ReportMetric(float64((cpu1-cpu0).Nanoseconds())/float64(b.N)/float64(st.TotalNodes), "cpu-ns/node")
	}
}
