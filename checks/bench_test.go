package checks_test

import (
	"testing"

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
