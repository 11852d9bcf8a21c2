package checks_test

import (
	"fmt"
	"runtime"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/netlist"
)

// stagesSource is a board of n divider-biased common-emitter stages on one
// 12 V supply, each R1 47k, R2 10k, RC 4.7k, RE 1k and one NPN: the scale
// scenario of issue 9. Invented for benchmarks.
func stagesSource(n int) []byte {
	var b strings.Builder
	fmt.Fprintf(&b, "%d common-emitter stages (benchmark board)\nVCC vcc 0 DC 12\n", n)
	b.WriteString(".model SNPN NPN(IS=5f BF=180 VAF=80)\n*@part SNPN vceo=40 vcbo=60 vebo=6 icmax=200m pd=625m tjmax=150 rthja=200 hfemin=100 hfemax=300\n")
	for i := 1; i <= n; i++ {
		fmt.Fprintf(&b, "R1_%d vcc b%d 47k\nR2_%d b%d 0 10k\nRC%d vcc c%d 4.7k\nRE%d e%d 0 1k\nQ%d c%d b%d e%d SNPN\n", i, i, i, i, i, i, i, i, i, i, i, i)
	}
	b.WriteString(".end\n")
	return []byte(b.String())
}

func stages(b testing.TB, n int) *netlist.Circuit {
	b.Helper()
	c, err := netlist.ReadSource(fmt.Sprintf("stages%d.cir", n), stagesSource(n), &netlist.LoadOptions{ReadFile: netlist.NoFiles})
	if err != nil {
		b.Fatal(err)
	}
	return c
}

func benchStages(b *testing.B, n int, opt checks.Options) { benchCircuit(b, stages(b, n), opt) }

// cpuTime is the process's user plus system time so far.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// BenchmarkStagesCorners is a full check (scenarios, corners, thermal) of
// boards of 25 to 400 stages: the cost exponent is
// log(t400/t25)/log(16).
func BenchmarkStagesCorners(b *testing.B) {
	for _, n := range []int{25, 100, 400} {
		b.Run(fmt.Sprint(n), func(b *testing.B) { benchStages(b, n, full) })
	}
}

// BenchmarkStagesNominal is the nominal case alone (check --corners=false
// on a board without drives), 100 and 2000 stages.
func BenchmarkStagesNominal(b *testing.B) {
	for _, n := range []int{100, 2000} {
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			benchStages(b, n, checks.Options{Thermal: true})
			var m runtime.MemStats
			runtime.ReadMemStats(&m)
			b.ReportMetric(float64(m.Sys)/1e6, "MB-sys")
		})
	}
}

// BenchmarkStagesCornersMemory is the full check of 2000 stages, with the
// memory it holds: MB-live is the heap in use after a collection while
// the Analysis (every case's facts) is still referenced, MB-sys what the
// Go runtime took from the system by then (a ceiling on the peak heap;
// the whole process's peak RSS is measured with GNU time, see README).
func BenchmarkStagesCornersMemory(b *testing.B) {
	c := stages(b, 2000)
	cpu0 := cpuTime()
	for i := 0; i < b.N; i++ {
		a, err := checks.Analyze(c, full)
		if err != nil {
			b.Fatal(err)
		}
		runtime.GC()
		var m runtime.MemStats
		runtime.ReadMemStats(&m)
		b.ReportMetric(float64(len(a.Cases)), "cases")
		b.ReportMetric(float64(m.HeapInuse)/1e6, "MB-live")
		b.ReportMetric(float64(m.Sys)/1e6, "MB-sys")
		runtime.KeepAlive(a)
	}
	b.ReportMetric((cpuTime()-cpu0).Seconds()*1e3/float64(b.N), "cpu-ms/op")
}
