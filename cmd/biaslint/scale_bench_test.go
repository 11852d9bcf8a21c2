package main

import (
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// stagesNetlist writes a board of n divider-biased common-emitter stages
// on one 12 V supply (R1 47k, R2 10k, RC 4.7k, RE 1k, one NPN each), the
// scale scenario of issue 9; invented for benchmarks.
func stagesNetlist(b testing.TB, dir string, n int) string {
	var s strings.Builder
	fmt.Fprintf(&s, "%d common-emitter stages (benchmark board)\nVCC vcc 0 DC 12\n", n)
	s.WriteString(".model SNPN NPN(IS=5f BF=180 VAF=80)\n*@part SNPN vceo=40 vcbo=60 vebo=6 icmax=200m pd=625m tjmax=150 rthja=200 hfemin=100 hfemax=300\n")
	for i := 1; i <= n; i++ {
		fmt.Fprintf(&s, "R1_%d vcc b%d 47k\nR2_%d b%d 0 10k\nRC%d vcc c%d 4.7k\nRE%d e%d 0 1k\nQ%d c%d b%d e%d SNPN\n", i, i, i, i, i, i, i, i, i, i, i, i)
	}
	s.WriteString(".end\n")
	p := filepath.Join(dir, fmt.Sprintf("stages%d.cir", n))
	if err := os.WriteFile(p, []byte(s.String()), 0o644); err != nil {
		b.Fatal(err)
	}
	return p
}

// buildBinary builds biaslint once for whole-process benchmarks.
func buildBinary(b *testing.B) string {
	b.Helper()
	bin := filepath.Join(b.TempDir(), "biaslint")
	if out, err := exec.Command("go", "build", "-o", bin, "github.com/biaslint/biaslint/cmd/biaslint").CombinedOutput(); err != nil {
		b.Fatalf("go build: %v\n%s", err, out)
	}
	return bin
}

// benchProcess runs the binary b.N times and reports the child's CPU
// time (user + system) per run. (Its peak memory is not reported: the
// kernel's high-water mark of a child started from this large test
// process includes the parent's pages; measure it with GNU time, as the
// README does.)
func benchProcess(b *testing.B, bin string, args ...string) {
	b.ResetTimer()
	var cpu time.Duration
	for i := 0; i < b.N; i++ {
		cmd := exec.Command(bin, args...)
		cmd.Stdout, cmd.Stderr = nil, nil
		err := cmd.Run()
		if ee, ok := err.(*exec.ExitError); err != nil && (!ok || ee.ExitCode() == 2) {
			b.Fatalf("%v: %v", args, err)
		}
		cpu += cmd.ProcessState.UserTime() + cmd.ProcessState.SystemTime()
	}
	b.ReportMetric(cpu.Seconds()*1e3/float64(b.N), "cpu-ms/op")
}

// BenchmarkProcessOp is the whole process of `op`: a 20-transistor board
// (20 stages) and a 2000-transistor one.
func BenchmarkProcessOp(b *testing.B) {
	bin := buildBinary(b)
	dir := b.TempDir()
	for _, n := range []int{20, 2000} {
		p := stagesNetlist(b, dir, n)
		b.Run(fmt.Sprint(n), func(b *testing.B) { benchProcess(b, bin, "op", "--format", "json", p) })
	}
}

// BenchmarkProcessCheck is the whole process of `check` with every
// corner: the demo board and 100 stages.
func BenchmarkProcessCheck(b *testing.B) {
	bin := buildBinary(b)
	dir := b.TempDir()
	b.Run("demo", func(b *testing.B) { benchProcess(b, bin, "check", "--demo") })
	p := stagesNetlist(b, dir, 100)
	b.Run("100", func(b *testing.B) { benchProcess(b, bin, "check", p) })
}
