package report

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"image"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"
)

// The browser check renders each report in headless Chromium (the Debian package
// "chromium"), as a reader would open it, and looks at what came out: the screenshot
// must decode at the window size and show ink and the plots' colours, the browser must
// print no console message (the page has no scripts, so any message is a fault), and the
// browser's network log must hold no request made by the page (a self-contained page
// fetches nothing). A deliberately broken page is run through the same harness first to
// show that the harness notices.
//
// Screenshots are kept in os.TempDir()/capcycle-screenshots for a person (or CI) to look at.

const shotW, shotH = 1200, 3000

type browserRun struct {
	png        []byte
	console    []string // console lines from stderr
	pageFetch  []string // URLs the page asked the network for
	stderrTail string
}

func chromiumPath(t *testing.T) string {
	t.Helper()
	if testing.Short() {
		t.Skip("browser check skipped in -short mode")
	}
	p, err := exec.LookPath("chromium")
	if err != nil {
		t.Skip("chromium is not installed (Debian package chromium); skipping the browser check")
	}
	return p
}

func shotDir(t *testing.T) string {
	dir := filepath.Join(os.TempDir(), "capcycle-screenshots")
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	return dir
}

// runChromium opens page (a file path) headless and returns what it saw.
func runChromium(t *testing.T, bin, page, shot string) browserRun {
	return runChromiumSize(t, bin, page, shot, shotW, shotH)
}

func runChromiumSize(t *testing.T, bin, page, shot string, w, h int) browserRun {
	t.Helper()
	tmp := t.TempDir()
	netlog := filepath.Join(tmp, "net.json")
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
	defer cancel()
	cmd := exec.CommandContext(ctx, bin,
		"--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--hide-scrollbars",
		"--disable-background-networking", "--disable-component-update", "--disable-sync",
		"--user-data-dir="+filepath.Join(tmp, "profile"),
		"--screenshot="+shot, fmt.Sprintf("--window-size=%d,%d", w, h),
		"--enable-logging=stderr", "--v=0",
		"--log-net-log="+netlog,
		// Nothing may resolve: a page that tried the network shows in the net log.
		"--host-resolver-rules=MAP * ~NOTFOUND",
		"file://"+page)
	// Without a session bus Chromium waits out D-Bus timeouts; a bus address that
	// fails at once keeps the run short.
	cmd.Env = append(os.Environ(), "DBUS_SESSION_BUS_ADDRESS=unix:path=/nonexistent")
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	cmd.Stdout = &stderr
	if err := cmd.Run(); err != nil {
		t.Fatalf("chromium: %v\n%s", err, tail(stderr.String(), 2000))
	}
	var run browserRun
	run.stderrTail = tail(stderr.String(), 2000)
	for _, line := range strings.Split(stderr.String(), "\n") {
		if strings.Contains(line, ":CONSOLE") {
			run.console = append(run.console, line)
		}
	}
	var err error
	if run.png, err = os.ReadFile(shot); err != nil {
		t.Fatalf("no screenshot: %v\n%s", err, run.stderrTail)
	}
	run.pageFetch = pageRequests(t, netlog)
	return run
}

// pageRequests lists the URLs in Chromium's net log that the page itself asked for:
// requests whose network isolation key is the file:// page's. The browser's own
// background requests carry other keys and are not the page's doing.
func pageRequests(t *testing.T, path string) []string {
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("net log: %v", err)
	}
	var log struct {
		Events []struct {
			Params map[string]any `json:"params"`
		} `json:"events"`
	}
	if err := json.Unmarshal(raw, &log); err != nil {
		// Chromium may leave the log without its closing bracket when it exits fast.
		if err2 := json.Unmarshal(append(bytes.TrimRight(bytes.TrimSpace(raw), ","), []byte("]}")...), &log); err2 != nil {
			t.Fatalf("net log does not parse: %v", err)
		}
	}
	seen := map[string]bool{}
	var out []string
	for _, e := range log.Events {
		url, _ := e.Params["url"].(string)
		nik, _ := e.Params["network_isolation_key"].(string)
		if url != "" && strings.Contains(nik, "file://") && !seen[url] {
			seen[url] = true
			out = append(out, url)
		}
	}
	return out
}

func tail(s string, n int) string {
	if len(s) > n {
		return "…" + s[len(s)-n:]
	}
	return s
}

// inkStats counts the screenshot's non-white pixels and those close to a colour.
func inkStats(img image.Image, near [][3]uint8) (nonWhite float64, nearCount []int) {
	b := img.Bounds()
	nearCount = make([]int, len(near))
	var n, total int
	for y := b.Min.Y; y < b.Max.Y; y += 2 {
		for x := b.Min.X; x < b.Max.X; x += 2 {
			r, g, bl, _ := img.At(x, y).RGBA()
			r8, g8, b8 := uint8(r>>8), uint8(g>>8), uint8(bl>>8)
			total++
			if r8 < 235 || g8 < 235 || b8 < 235 {
				n++
			}
			for i, c := range near {
				if absDiff(r8, c[0]) < 24 && absDiff(g8, c[1]) < 24 && absDiff(b8, c[2]) < 24 {
					nearCount[i]++
				}
			}
		}
	}
	return float64(n) / float64(total), nearCount
}

func absDiff(a, b uint8) int {
	if a > b {
		return int(a - b)
	}
	return int(b - a)
}

func TestBrowserHarnessNoticesFaults(t *testing.T) {
	bin := chromiumPath(t)
	t.Parallel()
	dir := t.TempDir()
	page := filepath.Join(dir, "broken.html")
	bad := `<!DOCTYPE html><html><head><link rel="stylesheet" href="http://example.invalid/x.css"></head>` +
		`<body><img src="https://example.invalid/a.png"><script>console.error("harness self-test")</script>x</body></html>`
	if err := os.WriteFile(page, []byte(bad), 0o644); err != nil {
		t.Fatal(err)
	}
	run := runChromium(t, bin, page, filepath.Join(dir, "broken.png"))
	if len(run.console) == 0 {
		t.Errorf("a console error went unnoticed\n%s", run.stderrTail)
	}
	if len(run.pageFetch) < 2 {
		t.Errorf("the page's network requests went unnoticed: %v", run.pageFetch)
	}
}

func TestBrowserRendersReports(t *testing.T) {
	bin := chromiumPath(t)
	dir := shotDir(t)
	pages := map[string][]byte{
		"wren":    renderPage(t, wrenOnce(), &Options{CSVHref: "wren.cycles.csv", JSONHref: "wren.analysis.json"}),
		"fern":    renderPage(t, fernOnce(), nil),
		"compare": renderCompare(t),
	}
	for name, html := range pages {
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			page := filepath.Join(dir, name+".html")
			if err := os.WriteFile(page, html, 0o644); err != nil {
				t.Fatal(err)
			}
			shot := filepath.Join(dir, name+".png")
			run := runChromium(t, bin, page, shot)
			t.Logf("screenshot: %s", shot)
			img, err := png.Decode(bytes.NewReader(run.png))
			if err != nil {
				t.Fatalf("screenshot does not decode: %v", err)
			}
			if b := img.Bounds(); b.Dx() != shotW || b.Dy() != shotH {
				t.Errorf("screenshot is %dx%d, want %dx%d", b.Dx(), b.Dy(), shotW, shotH)
			}
			// The page background is grey around a white sheet; the sheet holds the
			// text and plots. Ink: anything not near-white. Plot colours: the band
			// blue of the voltage plot and the accent of the headings.
			nonWhite, near := inkStats(img, [][3]uint8{{0xa9, 0xcb, 0xe4}, {0x0b, 0x5f, 0x8f}, {0x22, 0x22, 0x22}})
			t.Logf("non-white %.1f %%, band-blue %d, accent %d, ink %d (sampled pixels)", 100*nonWhite, near[0], near[1], near[2])
			if nonWhite < 0.03 {
				t.Errorf("the page looks blank: %.1f %% non-white", 100*nonWhite)
			}
			if name != "compare" && near[0] < 500 {
				t.Errorf("the voltage plot's band colour hardly shows (%d pixels): did the SVG render?", near[0])
			}
			if near[1] < 200 || near[2] < 500 {
				t.Errorf("headings or text hardly show (accent %d, ink %d)", near[1], near[2])
			}
			for _, c := range run.console {
				t.Errorf("browser console: %s", c)
			}
			for _, u := range run.pageFetch {
				t.Errorf("the page fetched %s", u)
			}
		})
	}
}

// TestBrowserPrints prints the day-long report to PDF in headless Chromium on Letter and
// on A4 paper and checks the print layout: the PDF has the paper's size, and the day's
// report prints in 2 to 6 pages.
func TestBrowserPrints(t *testing.T) {
	bin := chromiumPath(t)
	dir := shotDir(t)
	html := renderPage(t, wrenOnce(), nil)
	papers := []struct {
		name, css, mediaBox string
	}{
		{"letter", "", "/MediaBox [0 0 612 792]"},
		// The report leaves the size to the printer; a user's A4 choice is simulated
		// by the one rule a print dialog would apply.
		{"a4", "<style>@page { size: A4; }</style>", "/MediaBox [0 0 594.95996 841.91998]"}, // 210 × 297 mm in points, as Chromium rounds them
	}
	for _, paper := range papers {
		t.Run(paper.name, func(t *testing.T) {
			t.Parallel()
			page := filepath.Join(dir, "wren-print-"+paper.name+".html")
			doc := bytes.Replace(html, []byte("</head>"), []byte(paper.css+"</head>"), 1)
			if err := os.WriteFile(page, doc, 0o644); err != nil {
				t.Fatal(err)
			}
			pdf := filepath.Join(dir, "wren-"+paper.name+".pdf")
			os.Remove(pdf)
			ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
			defer cancel()
			cmd := exec.CommandContext(ctx, bin, "--headless", "--no-sandbox", "--disable-gpu", "--no-first-run",
				"--disable-background-networking", "--disable-component-update", "--disable-sync",
				"--user-data-dir="+filepath.Join(t.TempDir(), "profile"), "--host-resolver-rules=MAP * ~NOTFOUND",
				"--no-pdf-header-footer", "--print-to-pdf="+pdf, "file://"+page)
			cmd.Env = append(os.Environ(), "DBUS_SESSION_BUS_ADDRESS=unix:path=/nonexistent")
			if out, err := cmd.CombinedOutput(); err != nil {
				t.Fatalf("chromium --print-to-pdf: %v\n%s", err, tail(string(out), 2000))
			}
			raw, err := os.ReadFile(pdf)
			if err != nil {
				t.Fatal(err)
			}
			if !bytes.HasPrefix(raw, []byte("%PDF-")) {
				t.Fatal("not a PDF")
			}
			pages := len(pdfPage.FindAll(raw, -1))
			boxes := bytes.Count(raw, []byte(paper.mediaBox))
			t.Logf("%s: %d pages, %d of them %s", pdf, pages, boxes, paper.mediaBox)
			// Sections follow each other without forced breaks: a day's report fits in
			// 6 pages, and more than one (a runaway layout would spill, a broken one
			// would print nothing).
			if pages < 2 || pages > 6 {
				t.Errorf("%d printed pages for a day's report, want 2 to 6", pages)
			}
			if boxes != pages {
				t.Errorf("%d of %d pages have the paper size %s", boxes, pages, paper.mediaBox)
			}
		})
	}
}

// pdfPage matches a page object's type entry (and not the page tree's "/Type /Pages").
var pdfPage = regexp.MustCompile(`/Type\s*/Page\b[^s]`)

// TestBrowserNarrowNoOverflow renders the day-long report in a window as narrow as an A4
// page (794 px at 96 px per inch) and checks that nothing runs off the right side: the
// page's right padding must stay free of ink from top to bottom.
func TestBrowserNarrowNoOverflow(t *testing.T) {
	bin := chromiumPath(t)
	t.Parallel()
	dir := shotDir(t)
	page := filepath.Join(dir, "wren-narrow.html")
	if err := os.WriteFile(page, renderPage(t, wrenOnce(), nil), 0o644); err != nil {
		t.Fatal(err)
	}
	const w, h = 794, 6000
	run := runChromiumSize(t, bin, page, filepath.Join(dir, "wren-narrow.png"), w, h)
	img, err := png.Decode(bytes.NewReader(run.png))
	if err != nil {
		t.Fatal(err)
	}
	// The sheet's padding is 1.6 rem (about 25 px); look at the outer 12 px, below the
	// accent bar that tops the sheet edge to edge (30 px).
	var ink int
	for y := 40; y < img.Bounds().Dy(); y++ {
		for x := w - 12; x < w; x++ {
			r, g, b, _ := img.At(x, y).RGBA()
			if r>>8 < 160 && g>>8 < 160 && b>>8 < 160 {
				ink++
			}
		}
	}
	if ink > 0 {
		t.Errorf("%d dark pixels in the right margin of a 794 px wide window: something overflows", ink)
	}
}
