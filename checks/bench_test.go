package checks_test

import (
	"math"
	"runtime"
	"sort"
	"sync"
	"testing"
	"time"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/netlist"
)

func demo(b *testing.B) *netlist.Circuit {
	b.Helper()
	c, err := netlist.Read("../rulesets/demo/bench-logger.cir", nil)
	if err != nil {
		b.Fatal(err)
	}
	return c
}

func benchAnalyze(b *testing.B, opt checks.Options) { benchCircuit(b, demo(b), opt) }

// benchCircuit analyses c b.N times, reporting the cases and the CPU time
// (user + system) per run: on a machine shared with other jobs it is
// steadier than the wall time.
func benchCircuit(b *testing.B, c *netlist.Circuit, opt checks.Options) {
	b.ReportAllocs()
	b.ResetTimer()
	cpu0 := cpuTime()
	for i := 0; i < b.N; i++ {
		a, err := checks.Analyze(c, opt)
		if err != nil {
			b.Fatal(err)
		}
		b.ReportMetric(float64(len(a.Cases)), "cases")
	}
	b.ReportMetric((cpuTime()-cpu0).Seconds()*1e3/float64(b.N), "cpu-ms/op")
}

// BenchmarkNominal is the demo board's nominal case, as before corners.
func BenchmarkNominal(b *testing.B) { benchAnalyze(b, checks.Options{}) }

// BenchmarkCorners is what check runs by default: scenarios, corners and
// the electro-thermal solve.
func BenchmarkCorners(b *testing.B) { benchAnalyze(b, full) }

// BenchmarkMonteCarlo1000 adds 1000 Monte Carlo runs.
func BenchmarkMonteCarlo1000(b *testing.B) {
	o := full
	o.MonteCarlo, o.Seed = 1000, 1
	benchAnalyze(b, o)
}

// BenchmarkMonteCarloSpeedup is BenchmarkMonteCarlo1000 on one core and
// on two, interleaved: each iteration runs the analysis with GOMAXPROCS
// 1 and then 2 (the order alternating from one iteration to the next), so
// that both see the same load of a shared machine. It reports the median
// of each and the median of the per-iteration ratios (x-speedup), the
// figure the README gives. Each iteration also times a reference loop
// with no memory traffic and no shared state (parallelLoop) the same
// way: x-reference is what the machine gives work that is perfectly
// parallel at that moment (a virtual machine's second core is not always
// a whole core), and efficiency is x-speedup over x-reference. It needs
// two cores; on one it is skipped.
func BenchmarkMonteCarloSpeedup(b *testing.B) {
	if runtime.NumCPU() < 2 {
		b.Skip("needs two cores")
	}
	o := full
	o.MonteCarlo, o.Seed = 1000, 1
	c := demo(b)
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	analyze := func() {
		if _, err := checks.Analyze(c, o); err != nil {
			b.Fatal(err)
		}
	}
	timed := func(procs int, f func()) float64 {
		runtime.GOMAXPROCS(procs)
		t0 := time.Now()
		f()
		return time.Since(t0).Seconds()
	}
	var one, two, ratio, ref, eff []float64
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		var t1, t2, r1, r2 float64
		if i%2 == 0 {
			t1, t2 = timed(1, analyze), timed(2, analyze)
			r1, r2 = timed(1, parallelLoop), timed(2, parallelLoop)
		} else {
			r2, r1 = timed(2, parallelLoop), timed(1, parallelLoop)
			t2, t1 = timed(2, analyze), timed(1, analyze)
		}
		one, two = append(one, t1), append(two, t2)
		ratio, ref = append(ratio, t1/t2), append(ref, r1/r2)
		eff = append(eff, (t1/t2)/(r1/r2))
	}
	b.ReportMetric(median(one)*1e3, "ms-1core")
	b.ReportMetric(median(two)*1e3, "ms-2cores")
	b.ReportMetric(median(ratio), "x-speedup")
	b.ReportMetric(median(ref), "x-reference")
	b.ReportMetric(median(eff), "efficiency")
}

// parallelLoop runs two goroutines of a scalar loop (about 0.3 s of one
// core in all) that touches no memory and shares nothing.
func parallelLoop() {
	var wg sync.WaitGroup
	sums := make([]float64, 2)
	for g := range sums {
		wg.Add(1)
		go func() {
			defer wg.Done()
			s := 0.0
			for i := 0; i < 10_000_000; i++ {
				s += math.Exp(float64(i%100) * 1e-3)
			}
			sums[g] = s
		}()
	}
	wg.Wait()
	if math.IsNaN(sums[0] + sums[1]) {
		panic("parallelLoop")
	}
}

// median returns the median of v (v is sorted in place).
func median(v []float64) float64 {
	if len(v) == 0 {
		return math.NaN()
	}
	sort.Float64s(v)
	if n := len(v); n%2 == 1 {
		return v[n/2]
	} else {
		return (v[n/2-1] + v[n/2]) / 2
	}
}
