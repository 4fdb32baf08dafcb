package fit

import (
	"context"
	"fmt"
	"math"
	"os"
	"runtime"
	"strconv"
	"sync"
	"testing"

	"github.com/mirabilis-astro/mirabilis/internal/fastexp"
	"github.com/mirabilis-astro/mirabilis/mcmc"
	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/mock"
)

// benchGalaxy is an invented four-armed galaxy for the scaling benchmarks: every source
// free to belong to any arm or the field, every kinematic term measured, the whole sky
// surveyed out to 18 kpc (so that far-side and inner-Galaxy sightlines are included). The
// priors are broad and centred on the truth the mock is drawn from (their medians).
const benchGalaxy = `
catalog = "bench.csv"

[rotation]
curve = "linear"

[params]
R0 = "uniform(7.5, 9)"
Theta0 = "uniform(200, 260)"
dTheta_dR = "uniform(-4, 2.8)"
Usun = "uniform(0, 20)"
Vsun = "uniform(0, 24)"
Wsun = "uniform(5, 10)"
Us = "uniform(-8, 12)"
Vs = "uniform(-13, 7)"
Ws = "uniform(-5, 5)"
sigma_vir = "uniform(2, 10)"
width_slope = 0

[[arm]]
name = "Osprey"
azimuth_range = [-40, 160]
radius = "uniform(4.4, 5.6)"
pitch = "uniform(8, 16)"
width = "uniform(0.15, 0.35)"

[[arm]]
name = "Quill"
azimuth_range = [-50, 170]
radius = "uniform(6, 7.4)"
pitch = "uniform(7, 15)"
width = "uniform(0.2, 0.4)"

[[arm]]
name = "Sorrel"
azimuth_range = [-60, 130]
radius = "uniform(8.6, 10)"
pitch = "uniform(8, 16)"
width = "uniform(0.2, 0.4)"

[[arm]]
name = "Wren"
azimuth_range = [-60, 100]
radius = "uniform(11, 12.6)"
pitch = "uniform(6, 14)"
width = "uniform(0.25, 0.45)"

[survey]
seed = 1789
fractions = { field = 0.15 }
parallax_error = [0.008, 0.003]
proper_motion_error = [0.03, 0.015]
velocity_error = 3
labelled = 0
galactic_share = 0.1
missing_share = 0
`

// benchMock is a mock of n sources with its quadratures laid out at the truth.
type benchMock struct {
	job   *Job
	x     []float64 // the truth in sampled coordinates
	nodes int       // total quadrature nodes
	held  float64   // bytes held by the likelihood per source
}

var benchMocks sync.Map // n → *benchMock

// mockJob draws (once per process) a mock of n sources from benchGalaxy with a fixed seed
// and lays out its quadratures at the true parameters.
func mockJob(b *testing.B, n int) *benchMock {
	if m, ok := benchMocks.Load(n); ok {
		return m.(*benchMock)
	}
	m, err := mock.Parse([]byte(benchGalaxy), "bench.toml", b.TempDir())
	if err != nil {
		b.Fatal(err)
	}
	m.Survey.Sources = n
	spec, err := SpecFromConfig(m.Config)
	if err != nil {
		b.Fatal(err)
	}
	src, _, err := m.Draw(spec, nil)
	if err != nil {
		b.Fatal(err)
	}
	var before, after runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&before)
	job, err := Prepare(m.Config, &catalog.Catalog{Path: "bench.csv", Sources: src})
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
	src = nil
	runtime.GC()
	runtime.ReadMemStats(&after)
	bm := &benchMock{job: job, x: x, nodes: st.TotalNodes, held: float64(after.HeapAlloc-before.HeapAlloc) / float64(n)}
	runtime.KeepAlive(job)
	benchMocks.Store(n, bm)
	return bm
}

// BenchmarkLogDensity evaluates the log posterior of mocks of 10², 10³, 10⁴ and (with
// MIRABILIS_BENCH_LARGE=1, as laying out its quadratures takes minutes) 10⁵ sources, four
// arms, free memberships and full kinematics, on one thread. Besides ns/op (one
// evaluation, wall time) it reports ns/node, nodes/source, the bytes the likelihood holds
// per source, cpu-ns/node (the thread's CPU time per node, which a loaded machine inflates
// far less than wall time) and x-roofline: cpu-ns/node as a multiple of rooflineKernel's,
// timed alongside.
func BenchmarkLogDensity(b *testing.B) {
	sizes := []int{100, 1000, 10000}
	if os.Getenv("MIRABILIS_BENCH_LARGE") != "" {
		sizes = append(sizes, 100000)
	}
	for _, n := range sizes {
		b.Run("sources="+strconv.Itoa(n), func(b *testing.B) {
			bm := mockJob(b, n)
			post := bm.job.Post
			if v := post.LogDensity(bm.x); math.IsInf(v, 0) || math.IsNaN(v) {
				b.Fatalf("log density at the truth is %v", v)
			}
			runtime.LockOSThread()
			defer runtime.UnlockOSThread()
			b.ReportAllocs()
			b.ResetTimer()
			cpu0, cpuOK := threadCPU()
			for range b.N {
				post.LogDensity(bm.x)
			}
			cpu1, _ := threadCPU()
			b.StopTimer()
			perNode := float64(b.Elapsed().Nanoseconds()) / float64(b.N) / float64(bm.nodes)
			b.ReportMetric(perNode, "ns/node")
			b.ReportMetric(float64(bm.nodes)/float64(n), "nodes/source")
			b.ReportMetric(bm.held, "B-held/source")
			if cpuOK {
				cpuPerNode := float64((cpu1 - cpu0).Nanoseconds()) / float64(b.N) / float64(bm.nodes)
				b.ReportMetric(cpuPerNode, "cpu-ns/node")
				b.ReportMetric(cpuPerNode/rooflineCPUPerNode(), "x-roofline")
			}
		})
	}
}

// rooflineNodes is the number of nodes rooflineKernel runs over.
const rooflineNodes = 4096

// rooflineInput holds node constants of a few invented sightlines.
type rooflineInput struct {
	px, py, invKD, base, w []float64
}

func newRooflineInput() *rooflineInput {
	in := &rooflineInput{}
	for j := range rooflineNodes {
		d := 0.1 + 15*float64(j)/rooflineNodes
		l := 2 * math.Pi * float64(j%97) / 97
		in.px = append(in.px, d*math.Cos(l))
		in.py = append(in.py, d*math.Sin(l))
		in.invKD = append(in.invKD, 1/(4.740470463533348*d))
		in.base = append(in.base, -0.5*(d-5)*(d-5))
		in.w = append(in.w, 1e-3)
	}
	return in
}

var rooflineSink float64

// rooflineKernel is the arithmetic a node cannot do without, in a tight loop over
// contiguous arrays: the radius (a square root) and azimuth (atan2) of the node, the
// rotation curve and three velocity residuals with their variances, the inner-Galaxy
// scatter (one exponential), the field density (one exponential), for each of four arms
// the centre line's radius at the node's azimuth (one exponential) and its Gaussian (one
// exponential), the kinematic normalisation (a square root) and the node's term of the
// quadrature sum (one exponential). Exponentials are fastexp.Exp, as in the likelihood.
func rooflineKernel(in *rooflineInput) float64 {
	var sum float64
	const r0, th0, slope, vs, us, w0 = 8.2, 232, -0.6, -3, 2, 0.3
	var a, t [4]float64
	for k := range a {
		a[k] = 1.5 + 0.3*float64(k)
		t[k] = 0.2 + 0.01*float64(k)
	}
	for j, px := range in.px {
		x, y := r0-px, in.py[j]
		R := math.Sqrt(x*x + y*y)
		cb, sb := x/R, y/R
		beta := math.Atan2(sb, cb)
		rot := th0 + slope*(R-r0) + vs
		vx := rot*sb + us*cb - 10
		vy := rot*cb - us*sb - 245
		v2 := 36 + 1600/(1+fastexp.Exp((R-4)*2))
		inv := in.invKD[j]
		r1, r2, r3 := 40-(vx*0.6+vy*0.8), 3-(vy*0.6-vx*0.8)*inv, 0.1-7*inv
		vv1, vv2 := 9+v2, 0.01+v2*inv*inv
		z2 := r1*r1/vv1 + (r2*r2+r3*r3)/vv2
		s := 0.15 * fastexp.Exp(-R*(1.0/3))
		for k := range a {
			rk := fastexp.Exp(a[k] - t[k]*beta)
			g := (R - rk) * (1 / w0)
			s += 0.2 * fastexp.Exp(-0.5*g*g)
		}
		sum += in.w[j] * s / math.Sqrt(vv1*vv2*vv2) * fastexp.Exp(in.base[j]-0.5*z2)
	}
	return sum
}

var (
	rooflineOnce sync.Once
	rooflineIn   *rooflineInput
)

// rooflineCPUPerNode runs rooflineKernel now, a few times, and returns its CPU time per node
// in ns (the caller is locked to its thread).
func rooflineCPUPerNode() float64 {
	rooflineOnce.Do(func() { rooflineIn = newRooflineInput() })
	const reps = 50
	t0, _ := threadCPU()
	for range reps {
		rooflineSink += rooflineKernel(rooflineIn)
	}
	t1, _ := threadCPU()
	return float64((t1 - t0).Nanoseconds()) / reps / rooflineNodes
}

// BenchmarkRoofline runs rooflineKernel; its cost per node is the floor the likelihood's
// is compared with. cpu-ns/node counts the thread's CPU time only.
func BenchmarkRoofline(b *testing.B) {
	in := newRooflineInput()
	runtime.LockOSThread()
	defer runtime.UnlockOSThread()
	b.ResetTimer()
	cpu0, cpuOK := threadCPU()
	for range b.N {
		rooflineSink += rooflineKernel(in)
	}
	cpu1, _ := threadCPU()
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/rooflineNodes, "ns/node")
	if cpuOK {
		b.ReportMetric(float64((cpu1-cpu0).Nanoseconds())/float64(b.N)/rooflineNodes, "cpu-ns/node")
	}
}

// BenchmarkWalkerSteps runs the sampler on a 400-source mock with 1 and 2 threads and
// reports walker-steps/s (walkers × steps per second of wall time). b.N is the number of
// steps; the log density shares sources among threads as a fit's does. The parallel
// efficiency is the ratio of the two rates over the thread ratio. walker-steps/cpu-s counts
// the process's CPU time instead of wall time: on a machine whose cores are busy with other
// work, its ratio between the two thread counts measures the cost of sharing the work
// (synchronisation, idle helpers spinning up), which wall time cannot.
func BenchmarkWalkerSteps(b *testing.B) {
	bm := mockJob(b, 400)
	post := bm.job.Post
	scale := make([]float64, len(bm.x))
	for k := range scale {
		scale[k] = 1e-3 * math.Max(1, math.Abs(bm.x[k]))
	}
	for _, threads := range []int{1, 2} {
		b.Run(fmt.Sprintf("threads=%d", threads), func(b *testing.B) {
			set := &mcmc.Settings{Seed: 5, Threads: threads, Steps: b.N}
			logDensity := func(x []float64) float64 { return post.LogDensityParallel(x, threads) }
			b.ResetTimer()
			cpu0, cpuOK := processCPU()
			res, err := mcmc.Run(context.Background(), mcmc.Problem{LogDensity: logDensity, Dim: post.Dim()},
				mcmc.Start{Center: bm.x, Scale: scale}, set)
			if err != nil {
				b.Fatal(err)
			}
			cpu1, _ := processCPU()
			b.StopTimer()
			steps := float64(len(res.Positions) * b.N)
			b.ReportMetric(steps/b.Elapsed().Seconds(), "walker-steps/s")
			if cpuOK {
				b.ReportMetric(steps/(cpu1-cpu0).Seconds(), "walker-steps/cpu-s")
			}
		})
	}
}
