package report

import (
	"bytes"
	"context"
	"fmt"
	"image"
	"image/png"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/cdproto/cdp"
	"github.com/chromedp/cdproto/emulation"
	"github.com/chromedp/chromedp"

	"enough/designs/plot"
)

// chromium returns the path of a Chromium executable, or "" when none is
// installed.
func chromium() string {
	for _, name := range []string{"chromium", "chromium-browser"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	if _, err := os.Stat("/usr/bin/chromium"); err == nil {
		return "/usr/bin/chromium"
	}
	return ""
}

// The printable width of the two papers at the page's @page margins
// (16 mm left and right), in CSS pixels (96 to the inch, 25.4 mm to the
// inch): A4 is 210 mm wide, Letter 8.5 in (215.9 mm).
var papers = []struct {
	name          string
	width, height float64 // inches, for printing
	printable     float64 // CSS pixels
}{
	{"A4", 210 / 25.4, 297 / 25.4, (210 - 32) / 25.4 * 96},
	{"Letter", 8.5, 11, (215.9 - 32) / 25.4 * 96},
}

// browserPage is a page of the browser test with what its text must say.
type browserPage struct {
	htmlPage
	// figure draws the page's plot.
	figure func(t *testing.T) *Figure
	// numbers must appear in the page's text, as a reader sees it.
	numbers []string
	// labels must appear in the plot's text (its axes).
	labels []string
}

// svgFigure wraps a plot's SVG as a figure.
func svgFigure(t *testing.T, svg []byte, err error) *Figure {
	t.Helper()
	if err != nil {
		t.Fatal(err)
	}
	return &Figure{SVG: svg, Caption: "The plot of the page."}
}

// TestBrowser renders pages in headless Chromium, prints each to PDF on
// A4 and Letter, and checks what a reader would see: a page that is not
// blank, the plan's key numbers in its text, the plot with its axis
// labels, and nothing wider than the printable width.
//
// The demonstration plan's numbers are checked against a calculation by
// hand, not against the program: Fleiss's formula for risks 0.126 and
// 0.18, two-sided alpha 0.05 and power 0.8 gives n' = (1.95996·√(2 ×
// 0.153 × 0.847) + 0.84162·√(0.126 × 0.874 + 0.18 × 0.82))² / 0.054² =
// 696.4; the continuity correction n'/4·(1 + √(1 + 4/(n'·0.054)))² =
// 733.0, so 734 a group, 1,468 in all, and 734/0.9 = 815.6, so 816 to
// enrol a group, 1,632 in all.
func TestBrowser(t *testing.T) {
	exe := chromium()
	if exe == "" {
		t.Skip("Chromium is not installed: the browser test needs the Debian package chromium (apt-get install chromium)")
	}
	start := time.Now()
	pages := []browserPage{
		{htmlPage: planPage("demo-trial.yaml"),
			figure: func(t *testing.T) *Figure {
				p, err := plot.Plan(planExample(t, "demo-trial.yaml"))
				if err != nil {
					t.Fatal(err)
				}
				svg, err := plot.SVG(p)
				return svgFigure(t, svg, err)
			},
			numbers: []string{"734 in the follow-up arm and 734 in the usual-care arm, 1,468 in total", "816 in the follow-up arm and 816 in the usual-care arm, 1,632 in total", "Pharmacist follow-up calls after discharge"},
			labels:  []string{"participants per group", "power"}},
		// The widest table of the examples (five columns of a cluster
		// trial); the design effect by hand: 1 + ((0.4² + 1) × 40 − 1) ×
		// 0.03 = 2.362 (Eldridge, Ashby & Kerry 2006).
		{htmlPage: planPage("trial-cluster-schools.yaml"),
			figure: func(t *testing.T) *Figure {
				p, err := plot.Plan(planExample(t, "trial-cluster-schools.yaml"))
				if err != nil {
					t.Fatal(err)
				}
				svg, err := plot.SVG(p)
				return svgFigure(t, svg, err)
			},
			numbers: []string{"Design effect: 2.362", "Clusters", "School breakfast clubs"},
			labels:  []string{"in clusters of 40", "power"}},
		// The table of looks of a group-sequential trial: ten columns.
		{htmlPage: planPage("trial-interim-foot-ulcer.yaml"),
			figure: func(t *testing.T) *Figure {
				p, err := plot.Plan(planExample(t, "trial-interim-foot-ulcer.yaml"))
				if err != nil {
					t.Fatal(err)
				}
				svg, err := plot.SVG(p)
				return svgFigure(t, svg, err)
			},
			numbers: []string{"Interim analyses: boundaries look by look", "3.099", "Chance of stopping here", "Offloading boot"},
			labels:  []string{"maximum", "power"}},
		{htmlPage: reviewPage("review-under-powered-wound-dressing.yaml"),
			figure: func(t *testing.T) *Figure {
				rep, _, src := reviewExample(t, "review-under-powered-wound-dressing.yaml")
				p, err := plot.PlanFrom(rep.Plan, &plot.Source{File: src.File, Data: src.Data})
				if err != nil {
					t.Fatal(err)
				}
				svg, err := plot.SVG(p)
				return svgFigure(t, svg, err)
			},
			numbers: []string{"Sample-size recheck", "Cautions"},
			labels:  []string{"power"}},
		{htmlPage: sweepPage("demo-trial.yaml", "risk_ratio=0.6,0.7,0.8", "control_risk=0.15,0.2"),
			figure: func(t *testing.T) *Figure {
				tab, _ := sweepExample(t, "demo-trial.yaml", "risk_ratio=0.6,0.7,0.8", "control_risk=0.15,0.2")
				f, err := plot.Sweep(tab)
				if err != nil {
					t.Fatal(err)
				}
				svg, err := plot.Render(f, "svg")
				return svgFigure(t, svg, err)
			},
			// The demonstration's own point (risk ratio 0.7, control risk
			// 0.18) is not on this grid; its columns are.
			numbers: []string{"risk_ratio", "control_risk", "0.6", "0.15", "Cautions"},
			labels:  []string{"risk ratio"}},
		// Twelve panels: the tallest figure a sweep draws must still fit
		// on a printed page.
		{htmlPage: sweepPage("demo-trial.yaml", "risk_ratio=0.6,0.7", "power=0.8,0.9", "attrition=0:0.11:0.01"),
			figure: func(t *testing.T) *Figure {
				tab, _ := sweepExample(t, "demo-trial.yaml", "risk_ratio=0.6,0.7", "power=0.8,0.9", "attrition=0:0.11:0.01")
				f, err := plot.Sweep(tab)
				if err != nil {
					t.Fatal(err)
				}
				svg, err := plot.Render(f, "svg")
				return svgFigure(t, svg, err)
			},
			numbers: []string{"attrition", "Cautions"},
			labels:  []string{"risk ratio", "attrition = 0.11"}},
	}

	dir := t.TempDir()
	opts := append(chromedp.DefaultExecAllocatorOptions[:0:0],
		chromedp.ExecPath(exe),
		chromedp.UserDataDir(filepath.Join(dir, "profile")),
		chromedp.Headless,
		chromedp.NoSandbox,
		chromedp.DisableGPU,
		chromedp.NoFirstRun,
		chromedp.NoDefaultBrowserCheck,
		chromedp.Flag("disable-background-networking", true),
		chromedp.Flag("disable-extensions", true),
		chromedp.Flag("disable-sync", true),
		chromedp.Flag("hide-scrollbars", true),
		chromedp.Flag("mute-audio", true),
		chromedp.WindowSize(1000, 1400),
	)
	actx, cancelAlloc := chromedp.NewExecAllocator(context.Background(), opts...)
	defer cancelAlloc()
	bctx, cancelBrowser := chromedp.NewContext(actx)
	defer cancelBrowser()
	// The first action starts the browser, with a context without a
	// deadline (the deadline would stop the browser); the tabs have one.
	if err := chromedp.Do(bctx); err != nil {
		t.Fatalf("Chromium (%s) did not start: %v", exe, err)
	}

	for _, p := range pages {
		t.Run(p.name, func(t *testing.T) {
			var b bytes.Buffer
			if err := p.write(t, &b, p.figure(t)); err != nil {
				t.Fatal(err)
			}
			file := filepath.Join(dir, p.name+".html")
			if err := os.WriteFile(file, b.Bytes(), 0o644); err != nil {
				t.Fatal(err)
			}
			tab, cancelTab := chromedp.NewContext(bctx)
			defer cancelTab()
			if err := chromedp.Do(tab, chromedp.Navigate("file://"+file), chromedp.WaitReady(chromedp.CSS("footer"))); err != nil {
				t.Fatal(err)
			}
			tctx, cancelTimeout := context.WithTimeout(tab, 30*time.Second)
			defer cancelTimeout()
			text := evaluate[string](t, tctx, `document.body.innerText`)
			svgs := evaluate[int](t, tctx, `document.querySelectorAll("figure svg").length`)
			svgText := evaluate[string](t, tctx, `Array.from(document.querySelectorAll("figure svg text")).map(e => e.textContent).join("\n")`)
			shot, err := chromedp.Run(tctx, chromedp.CaptureScreenshot())
			if err != nil {
				t.Fatal(err)
			}
			if err := notBlank(shot); err != nil {
				t.Error(err)
			}
			for _, n := range p.numbers {
				if !strings.Contains(text, n) {
					t.Errorf("the page's text lacks %q", n)
				}
			}
			if svgs != 1 {
				t.Errorf("%d plots in the page, want 1", svgs)
			}
			for _, l := range p.labels {
				if !strings.Contains(strings.ToLower(svgText), l) {
					t.Errorf("the plot's text lacks the label %q; it reads %q", l, svgText)
				}
			}

			for _, paper := range papers {
				// At the printable width, with the print style sheet,
				// nothing may stick out on the right.
				width := math.Floor(paper.printable)
				err := chromedp.Do(tctx,
					chromedp.Func(func(ctx context.Context, tg *chromedp.Target) error {
						_, err := cdp.Call(ctx, tg, emulation.SetEmulatedMedia, emulation.SetEmulatedMediaParams{Media: "print"})
						return err
					}),
					chromedp.EmulateViewport(int64(width), 1000),
				)
				if err != nil {
					t.Fatal(err)
				}
				scroll := evaluate[float64](t, tctx, `document.documentElement.scrollWidth`)
				overflow := evaluate[[]string](t, tctx, fmt.Sprintf(`Array.from(document.body.querySelectorAll("*")).filter(e => {
					const r = e.getBoundingClientRect();
					return r.width > 0 && (r.left < -0.5 || r.right > %g - 1);
				}).slice(0, 5).map(e => e.tagName + ": " + (e.textContent || "").slice(0, 60))`, width))
				if scroll > width {
					t.Errorf("%s: the page is %g px wide, more than the printable %g px", paper.name, scroll, width)
				}
				if len(overflow) > 0 {
					t.Errorf("%s: these stick out of the printable width: %q", paper.name, overflow)
				}
				// The plot fits on one printed page (the height less the
				// @page margins, 18 mm and 20 mm).
				if h := evaluate[float64](t, tctx, `document.querySelector("figure svg").getBoundingClientRect().height`); h > (paper.height*25.4-38)/25.4*96 {
					t.Errorf("%s: the plot is %g px tall, more than a printed page", paper.name, h)
				}

				err = chromedp.Do(tctx, chromedp.Func(func(ctx context.Context, tg *chromedp.Target) error {
					_, err := cdp.Call(ctx, tg, emulation.ClearDeviceMetricsOverride, cdp.Empty{})
					return err
				}))
				if err != nil {
					t.Fatal(err)
				}
				pdf, err := chromedp.Run(tctx, chromedp.PrintToPDF(
					chromedp.PDFPaper(chromedp.PaperSize{Width: paper.width, Height: paper.height}),
					chromedp.PDFPrintBackground()))
				if err != nil {
					t.Fatal(err)
				}
				if !bytes.HasPrefix(pdf, []byte("%PDF-")) || len(pdf) < 5000 {
					t.Errorf("%s: the PDF has %d bytes and begins %q", paper.name, len(pdf), pdf[:min(len(pdf), 8)])
				}
				if os.Getenv("ENOUGH_KEEP_PDF") != "" {
					_ = os.WriteFile(filepath.Join(os.Getenv("ENOUGH_KEEP_PDF"), p.name+"-"+paper.name+".pdf"), pdf, 0o644)
					_ = os.WriteFile(filepath.Join(os.Getenv("ENOUGH_KEEP_PDF"), p.name+".png"), shot, 0o644)
				}
			}
		})
	}
	t.Logf("the browser test took %v", time.Since(start).Round(time.Millisecond))
}

// evaluate runs a JavaScript expression in the tab and returns its value.
func evaluate[T any](t *testing.T, ctx context.Context, expr string) T {
	t.Helper()
	v, err := chromedp.Run(ctx, chromedp.Evaluate[T](expr))
	if err != nil {
		t.Fatalf("%s: %v", expr, err)
	}
	return v
}

// notBlank says whether a PNG screenshot shows anything: its pixels are
// not all one colour.
func notBlank(shot []byte) error {
	img, err := png.Decode(bytes.NewReader(shot))
	if err != nil {
		return fmt.Errorf("the screenshot is no PNG: %v", err)
	}
	b := img.Bounds()
	if b.Empty() {
		return fmt.Errorf("the screenshot is empty")
	}
	first := img.At(b.Min.X, b.Min.Y)
	r0, g0, b0, a0 := first.RGBA()
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			r, g, bl, a := img.At(x, y).RGBA()
			if r != r0 || g != g0 || bl != b0 || a != a0 {
				return nil
			}
		}
	}
	return fmt.Errorf("the screenshot (%d × %d) is blank: all one colour", b.Dx(), b.Dy())
}

// TestNotBlank checks the blank check on images made here.
func TestNotBlank(t *testing.T) {
	encode := func(mark bool) []byte {
		img := image.NewGray(image.Rect(0, 0, 20, 10))
		for i := range img.Pix {
			img.Pix[i] = 255
		}
		if mark {
			img.Pix[57] = 0
		}
		var b bytes.Buffer
		if err := png.Encode(&b, img); err != nil {
			t.Fatal(err)
		}
		return b.Bytes()
	}
	if err := notBlank(encode(false)); err == nil {
		t.Error("a white image passed as not blank")
	}
	if err := notBlank(encode(true)); err != nil {
		t.Errorf("an image with one dark pixel: %v", err)
	}
	if err := notBlank([]byte("not a png")); err == nil {
		t.Error("bytes that are no PNG passed")
	}
}
