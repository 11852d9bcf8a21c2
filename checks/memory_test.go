package checks_test

import (
	"errors"
	"runtime"
	"testing"

	"github.com/biaslint/biaslint/checks"
)

// TestMemoryLimit: an analysis whose estimated memory passes
// Options.MemoryLimit is refused with a *MemoryError naming the estimate,
// the limit and the cases planned; under a limit above the estimate the
// same board is analysed, and the estimate is not below the heap the
// finished analysis holds (measured here with runtime.MemStats: the
// estimate is meant as a ceiling, see checks/memory.go).
func TestMemoryLimit(t *testing.T) {
	c := stages(t, 100)
	opt := full
	opt.MemoryLimit = 1 << 20
	_, err := checks.Analyze(c, opt)
	var me *checks.MemoryError
	if !errors.As(err, &me) {
		t.Fatalf("1 MiB limit: %v, want a *MemoryError", err)
	}
	if me.Limit != 1<<20 || me.Need <= me.Limit || me.Cases < 1 {
		t.Errorf("error %+v", me)
	}
	runtime.GC()
	var m0, m1 runtime.MemStats
	runtime.ReadMemStats(&m0)
	opt.MemoryLimit = 1 << 30
	an, err := checks.Analyze(c, opt)
	if err != nil {
		t.Fatal(err)
	}
	runtime.GC()
	runtime.ReadMemStats(&m1)
	held := int64(m1.HeapInuse) - int64(m0.HeapInuse)
	// The estimate is at least what is held: a limit just under it is
	// refused; and within four times of it: four times is not.
	opt.MemoryLimit = held - 1
	if _, err := checks.Analyze(c, opt); !errors.As(err, &me) {
		t.Errorf("limit %d B, under the %d B the analysis of %d cases holds: %v, want a *MemoryError", opt.MemoryLimit, held, len(an.Cases), err)
	}
	opt.MemoryLimit = 4 * held
	if _, err := checks.Analyze(c, opt); err != nil {
		t.Errorf("limit %d B, four times the %d B held: %v; the estimate is too coarse to be a useful budget", opt.MemoryLimit, held, err)
	}
	runtime.KeepAlive(an)
}
