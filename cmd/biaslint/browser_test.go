package main

import (
	"bytes"
	"context"
	"fmt"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/chromedp/cdproto/log"
	"github.com/chromedp/cdproto/runtime"
	"github.com/chromedp/chromedp"
)

// browserPath finds a Chromium to drive: Debian's /usr/bin/chromium (what
// .ci/run installs), else one on PATH.
func browserPath() string {
	if fi, err := os.Stat("/usr/bin/chromium"); err == nil && !fi.IsDir() {
		return "/usr/bin/chromium"
	}
	for _, name := range []string{"chromium", "chromium-browser", "google-chrome"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	return ""
}

// TestReportInBrowser opens a generated review report in a real headless
// browser: the page must load with no console errors and no exceptions,
// show one plot per transistor and one findings row per finding of the JSON
// report, and look like something (its screenshot is not blank). Set
// BIASLINT_SCREENSHOT=FILE to keep the screenshot.
func TestReportInBrowser(t *testing.T) {
	exe := browserPath()
	if exe == "" {
		t.Skip("no Chromium found (/usr/bin/chromium or chromium on PATH): install Debian's chromium (apt-get install chromium) to run the browser test")
	}
	dir := t.TempDir()
	page := filepath.Join(dir, "review.html")
	args := []string{"testdata/check", "rulesets/demo/bench-logger.cir"}
	if _, errs, code := runCLI(t, append([]string{"report", "--output", page, "--title", "Browser test"}, args...)...); code != exitOK {
		t.Fatalf("report: exit %d: %s", code, errs)
	}
	files, transistors, findings := checkTotals(t, args...)

	actx, cancelAlloc := chromedp.NewExecAllocator(context.Background(),
		chromedp.ExecPath(exe),
		chromedp.Headless,
		chromedp.NoSandbox,
		chromedp.DisableGPU,
		chromedp.NoFirstRun,
		chromedp.NoDefaultBrowserCheck,
		chromedp.Flag("disable-background-networking", true),
		chromedp.Flag("disable-component-update", true),
		chromedp.Flag("disable-sync", true),
		chromedp.Flag("disable-default-apps", true),
		chromedp.Flag("disable-extensions", true),
		chromedp.Flag("disable-dev-shm-usage", true),
		chromedp.Flag("hide-scrollbars", true),
		chromedp.UserDataDir(filepath.Join(dir, "profile")),
		chromedp.WindowSize(1280, 1600),
	)
	defer cancelAlloc()
	ctx, cancelCtx := chromedp.NewContext(actx)
	defer cancelCtx()
	ctx, cancel := context.WithTimeout(ctx, 2*time.Minute)
	defer cancel()

	var mu sync.Mutex
	var problems []string
	if err := chromedp.Listen(ctx, func(ev any) {
		mu.Lock()
		defer mu.Unlock()
		switch e := ev.(type) {
		case *runtime.EventConsoleAPICalled:
			if e.Type == runtime.ConsoleAPICalledTypeError || e.Type == runtime.ConsoleAPICalledTypeAssert || e.Type == runtime.ConsoleAPICalledTypeWarning {
				var parts []string
				for _, a := range e.Args {
					parts = append(parts, string(a.Value)+a.Description)
				}
				problems = append(problems, fmt.Sprintf("console.%s: %s", e.Type, strings.Join(parts, " ")))
			}
		case *runtime.EventExceptionThrown:
			problems = append(problems, "exception: "+e.ExceptionDetails.Text)
		case *log.EventEntryAdded:
			if e.Entry.Level == log.EntryLevelError || e.Entry.Level == log.EntryLevelWarning {
				problems = append(problems, fmt.Sprintf("log %s (%s): %s %s", e.Entry.Level, e.Entry.Source, e.Entry.Text, e.Entry.URL))
			}
		}
	}); err != nil {
		t.Fatalf("starting %s: %v", exe, err)
	}

	if err := chromedp.Do(ctx,
		chromedp.Navigate("file://"+page),
		chromedp.WaitReady("footer"),
	); err != nil {
		t.Fatalf("loading the report: %v", err)
	}
	eval := func(expr string) int {
		t.Helper()
		n, err := chromedp.Run(ctx, chromedp.Evaluate[int](expr))
		if err != nil {
			t.Fatalf("%s: %v", expr, err)
		}
		return n
	}
	if n := eval(`document.querySelectorAll("svg.plane").length`); n != transistors || n == 0 {
		t.Errorf("%d plots on the page, want one per transistor (%d)", n, transistors)
	}
	// Every plot is laid out with a real size.
	if n := eval(`[...document.querySelectorAll("svg.plane")].filter(s => s.getBoundingClientRect().width > 200 && s.getBoundingClientRect().height > 100).length`); n != transistors {
		t.Errorf("%d plots laid out at a visible size, want %d", n, transistors)
	}
	if n := eval(`document.querySelectorAll("tr.finding").length`); n != findings || n == 0 {
		t.Errorf("%d findings rows, want the %d findings of the JSON report", n, findings)
	}
	if n := eval(`document.querySelectorAll("tr.grid-row a[href^='#']").length`); n != files {
		t.Errorf("%d grid links, want one per file (%d)", n, files)
	}
	// Every grid link leads to a section on the page.
	if n := eval(`[...document.querySelectorAll("tr.grid-row a")].filter(a => !document.getElementById(a.getAttribute("href").slice(1))).length`); n != 0 {
		t.Errorf("%d grid links lead nowhere", n)
	}
	// Nothing was fetched: the page is self-contained.
	if n := eval(`performance.getEntriesByType("resource").length`); n != 0 {
		t.Errorf("the page loaded %d resources", n)
	}

	shot, err := chromedp.Run(ctx, chromedp.CaptureScreenshot())
	if err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(bytes.NewReader(shot))
	if err != nil {
		t.Fatalf("screenshot is not a PNG: %v", err)
	}
	b := img.Bounds()
	colours := map[uint32]bool{}
	inked, total := 0, 0
	for y := b.Min.Y; y < b.Max.Y; y += 2 {
		for x := b.Min.X; x < b.Max.X; x += 2 {
			r, g, bl, _ := img.At(x, y).RGBA()
			colours[r>>8<<16|g>>8<<8|bl>>8] = true
			total++
			if r < 0xe000 || g < 0xe000 || bl < 0xe000 {
				inked++
			}
		}
	}
	t.Logf("screenshot %dx%d: %d colours, %.1f %% of pixels inked", b.Dx(), b.Dy(), len(colours), 100*float64(inked)/float64(total))
	if len(colours) < 32 || inked < total/50 {
		t.Errorf("the screenshot looks blank: %d colours, %d of %d pixels inked", len(colours), inked, total)
	}
	if keep := os.Getenv("BIASLINT_SCREENSHOT"); keep != "" {
		if err := os.WriteFile(keep, shot, 0o644); err != nil {
			t.Error(err)
		}
	}

	mu.Lock()
	defer mu.Unlock()
	for _, p := range problems {
		t.Errorf("browser reported: %s", p)
	}
}
