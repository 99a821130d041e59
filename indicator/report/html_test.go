package report

import (
	"bytes"
	"context"
	"image"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/data/density/densitytest"
	"tidemark/indicator"
)

// scanPage writes a 1-D exact-sum scan with a full page into a new folder and
// returns the folder.
func scanPage(t *testing.T) string {
	t.Helper()
	src := &densitytest.Logistic{N: 6, A: 3, C: 2, D: 1}
	var pts []float64
	for i := 0; i < 13; i++ {
		pts = append(pts, 1+float64(i)/6)
	}
	ds, err := data.New(2*len(pts), src.N, []string{"T"}, 2, []int{2, 3}, map[string]any{"generator": "test"})
	if err != nil {
		t.Fatal(err)
	}
	for k, p := range pts {
		ds.Params[2*k], ds.Params[2*k+1] = p, p
	}
	res, err := indicator.Run(context.Background(), []density.Source{src}, ds, indicator.Config{ExactSums: true, Threads: 2, Indicators: []string{"lbc", "fisher", "local"}})
	if err != nil {
		t.Fatal(err)
	}
	held := 0.71
	pg := &Page{
		Title:   "test scan",
		Lead:    "A page for a test <with markup to escape>.",
		Dataset: DatasetSummary("test.npz", ds),
		Models: []ModelInfo{{
			Path: "test.ckpt", Architecture: "conditioned MADE", Params: 1234, Epochs: 4, BestEpoch: 3,
			Stopped: "max epochs", BestVal: 0.7, HeldOut: &held,
			Curve: []EpochPoint{{1, 0.9, 0.85}, {2, 0.8, 0.78}, {3, 0.72, 0.70}, {4, 0.69, 0.705}},
		}},
		Checks: []Check{{Quantity: "peak of fisher", Estimate: 2.01, Err: 0.01, Reference: 2, RelDiff: 0.005, Source: "N a² p(1−p) peaks at T = c (common practice)"}},
	}
	dir := filepath.Join(t.TempDir(), "scan")
	if _, err := Write(dir, false, res, Info{Source: "exact", Refine: 1, Page: pg}); err != nil {
		t.Fatal(err)
	}
	return dir
}

func TestReportHTMLContent(t *testing.T) {
	dir := scanPage(t)
	b, err := os.ReadFile(filepath.Join(dir, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	page := string(b)
	for _, want := range []string{
		"<!DOCTYPE html>", "<title>test scan</title>",
		"&lt;with markup to escape&gt;", // plain text is escaped
		indicator.Caution[:60],          // the caution of design/indicators.md
		"Peaks", "Check against exact results", "0.50 %", "common practice",
		"Dataset", "test.npz", "26 (2 per grid point)", "lattice 2 × 3", "13 points of T",
		"Model", "1234", "0.70000 bits per site", "0.71000 bits per site", // best validation and held-out
		"Training and validation negative log-likelihood per epoch",
		"<code>lbc</code>", "<code>fisher</code>", "fisher.svg",
		"exact sums over all states",
	} {
		if !strings.Contains(page, want) {
			t.Errorf("report.html lacks %q", want)
		}
	}
	// Every picture the scan wrote is inline: one <svg per curve picture plus
	// the training curve.
	svgs, _ := filepath.Glob(filepath.Join(dir, "*.svg"))
	if got, want := strings.Count(page, "<svg"), len(svgs)+1; got != want {
		t.Errorf("report.html has %d inline SVGs, want %d (%d pictures and the training curve)", got, want, len(svgs))
	}
	// Self-contained: no scripts, no fetched resources, no XML prologue inside.
	for _, bad := range []string{"<script", `src="http`, `href="http`, "<?xml", "url(http"} {
		if strings.Contains(page, bad) {
			t.Errorf("report.html contains %q", bad)
		}
	}
	// The page is also listed in summary.json's files.
	sum, _ := os.ReadFile(filepath.Join(dir, "summary.json"))
	if !strings.Contains(string(sum), `"report.html"`) {
		t.Errorf("summary.json does not list report.html")
	}
}

// TestReportRendersInChromium renders report.html in headless Chromium and
// checks the screenshot is not blank: enough pixels differ from the
// background and there are many distinct colours (pictures, tables, text).
func TestReportRendersInChromium(t *testing.T) {
	bin, err := exec.LookPath("chromium")
	if err != nil {
		if _, e := os.Stat("/usr/bin/chromium"); e != nil {
			t.Skip("chromium is not installed (Debian package chromium; .ci/run installs it): report.html was not rendered")
		}
		bin = "/usr/bin/chromium"
	}
	dir := scanPage(t)
	shot := filepath.Join(t.TempDir(), "page.png")
	abs, _ := filepath.Abs(filepath.Join(dir, "report.html"))
	cmd := exec.Command(bin, "--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
		"--disable-component-update", "--disable-sync", "--no-first-run", "--user-data-dir="+t.TempDir(),
		"--screenshot="+shot, "--window-size=1200,1600", "file://"+abs)
	var out bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &out
	if err := cmd.Run(); err != nil {
		t.Fatalf("chromium: %v\n%s", err, out.String())
	}
	f, err := os.Open(shot)
	if err != nil {
		t.Fatalf("no screenshot: %v\n%s", err, out.String())
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatal(err)
	}
	frac, colours := inked(img)
	if frac < 0.05 || colours < 20 {
		t.Errorf("screenshot looks blank: %.1f%% of pixels differ from the background, %d distinct colours", 100*frac, colours)
	}
	if testing.Verbose() {
		t.Logf("screenshot: %.1f%% of pixels differ from the background, %d distinct colours", 100*frac, colours)
	}
}

// inked returns the fraction of pixels that differ from the most common
// colour and the number of distinct colours.
func inked(img image.Image) (float64, int) {
	count := map[[3]uint32]int{}
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			r, g, bl, _ := img.At(x, y).RGBA()
			count[[3]uint32{r >> 8, g >> 8, bl >> 8}]++
		}
	}
	top := 0
	for _, n := range count {
		top = max(top, n)
	}
	total := b.Dx() * b.Dy()
	return 1 - float64(top)/float64(total), len(count)
}

// TestReportHTMLExactSource checks that a scan of the exact density says that
// its curves are the exact reference and that their peaks carry no noise.
func TestReportHTMLExactSource(t *testing.T) {
	res, _ := scan2D(t)
	dir := filepath.Join(t.TempDir(), "scan")
	if _, err := Write(dir, false, res, Info{Source: "exact"}); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join(dir, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"themselves the exact reference", "exact, no noise", "exact sums over all states"} {
		if !strings.Contains(string(b), want) {
			t.Errorf("report.html lacks %q", want)
		}
	}
}
