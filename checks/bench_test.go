package checks_test

import (
	"math"
	"runtime"
	"sort"
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
// figure the README gives. It needs two cores; on one it is skipped.
func BenchmarkMonteCarloSpeedup(b *testing.B) {
	if runtime.NumCPU() < 2 {
		b.Skip("needs two cores")
	}
	o := full
	o.MonteCarlo, o.Seed = 1000, 1
	c := demo(b)
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	timed := func(procs int) time.Duration {
		runtime.GOMAXPROCS(procs)
		t0 := time.Now()
		if _, err := checks.Analyze(c, o); err != nil {
			b.Fatal(err)
		}
		return time.Since(t0)
	}
	var one, two, ratio []float64
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		var t1, t2 time.Duration
		if i%2 == 0 {
			t1, t2 = timed(1), timed(2)
		} else {
			t2, t1 = timed(2), timed(1)
		}
		one, two = append(one, t1.Seconds()), append(two, t2.Seconds())
		ratio = append(ratio, t1.Seconds()/t2.Seconds())
	}
	b.ReportMetric(median(one)*1e3, "ms-1core")
	b.ReportMetric(median(two)*1e3, "ms-2cores")
	b.ReportMetric(median(ratio), "x-speedup")
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
