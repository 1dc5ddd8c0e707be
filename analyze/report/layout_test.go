package report

import (
	"bytes"
	"context"
	"fmt"
	"html"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"capcycle/analyze/analysis"
)

// The layout check opens each report in headless Chromium as a reader would, on a
// desktop (1280 px) and a phone (390 px), and prints it to PDF. A copy of the page gets a
// probe script (the report itself has none) that measures, after layout, every element
// that reaches past the viewport's edges (a table's scroll box may hold a wide table;
// the box itself must fit) and the smallest text of the plots in screen pixels (its font
// size times the plot's scale); Chromium's --dump-dom hands the probe's line back. The
// PDF's pages are counted and the first page's text (pdftotext, Debian package
// poppler-utils) must hold the verdict.

// layoutProbe measures the report inside each iframe of the probe page once all have
// loaded, and writes one line per frame into a <pre>. (A headless window cannot be made
// narrower than 500 px; an iframe can, and its media queries follow its own width.)
const layoutProbe = `<script>
function measure(doc) {
  const vw = doc.documentElement.clientWidth;
  const wide = [];
  for (const el of doc.querySelectorAll("body *")) {
    if (el.closest(".tablewrap") && !el.classList.contains("tablewrap")) continue;
    if (el.closest("details:not([open])")) continue;
    const r = el.getBoundingClientRect();
    if (r.width === 0) continue;
    if (r.right > vw + 0.5 || r.left < -0.5) wide.push(el.tagName.toLowerCase() + (el.id ? "#" + el.id : "") + "(" + Math.round(r.left) + ".." + Math.round(r.right) + ")");
  }
  let minText = 1e9, minWhat = "";
  for (const t of doc.querySelectorAll("svg.plot text")) {
    if (!t.textContent.trim()) continue;
    const m = t.getScreenCTM();
    const px = parseFloat(getComputedStyle(t).fontSize) * Math.hypot(m.a, m.b);
    if (px < minText) { minText = px; minWhat = t.textContent.trim(); }
  }
  return "PROBE vw=" + vw + " scroll=" + doc.documentElement.scrollWidth +
    " mintext=" + minText.toFixed(2) + " mintextof=" + JSON.stringify(minWhat) + " wide=" + JSON.stringify(wide.slice(0, 12)) + " nwide=" + wide.length + " END";
}
addEventListener("load", () => {
  const pre = document.createElement("pre");
  for (const f of document.querySelectorAll("iframe")) pre.textContent += measure(f.contentDocument) + "\n";
  document.body.appendChild(pre);
});
</script>`

type layoutMeasure struct {
	viewport, scrollWidth int
	minTextPx             float64
	minTextOf             string
	wide                  string
	nWide                 int
}

var reProbe = regexp.MustCompile(`PROBE vw=(\d+) scroll=(\d+) mintext=([\d.e+]+) mintextof=(.*?) wide=(.*) nwide=(\d+) END`)

func chromiumArgs(tmp string) []string {
	return []string{"--headless", "--no-sandbox", "--disable-gpu", "--no-first-run", "--hide-scrollbars",
		"--disable-background-networking", "--disable-component-update", "--disable-sync",
		"--user-data-dir=" + filepath.Join(tmp, "profile"), "--host-resolver-rules=MAP * ~NOTFOUND"}
}

func runChromiumCmd(t *testing.T, bin string, args []string) []byte {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 4*time.Minute)
	defer cancel()
	cmd := exec.CommandContext(ctx, bin, args...)
	cmd.Env = append(os.Environ(), "DBUS_SESSION_BUS_ADDRESS=unix:path=/nonexistent")
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	if err := cmd.Run(); err != nil {
		t.Fatalf("chromium: %v\n%s", err, tail(errb.String(), 2000))
	}
	return out.Bytes()
}

// measureLayout renders page (HTML bytes) in one iframe per width, 900 px high, and
// returns the probe's measures, one per width.
func measureLayout(t *testing.T, bin string, page []byte, widths []int) []layoutMeasure {
	t.Helper()
	tmp := t.TempDir()
	file := filepath.Join(tmp, "probe.html")
	var doc strings.Builder
	doc.WriteString("<!DOCTYPE html><html><head><meta charset=\"utf-8\"></head><body style=\"margin:0\">")
	for _, w := range widths {
		fmt.Fprintf(&doc, `<iframe style="border:0;display:block" width="%d" height="900" srcdoc="%s"></iframe>`, w, html.EscapeString(string(page)))
	}
	doc.WriteString(layoutProbe + "</body></html>")
	if err := os.WriteFile(file, []byte(doc.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	args := append(chromiumArgs(tmp), "--window-size=1400,900", "--dump-dom", "file://"+file)
	out := runChromiumCmd(t, bin, args)
	ms := reProbe.FindAllSubmatch(out, -1)
	if len(ms) != len(widths) {
		t.Fatalf("%d probe lines for %d widths in the dumped page (%d bytes)", len(ms), len(widths), len(out))
	}
	var res []layoutMeasure
	for _, m := range ms {
		var r layoutMeasure
		r.viewport, _ = strconv.Atoi(string(m[1]))
		r.scrollWidth, _ = strconv.Atoi(string(m[2]))
		r.minTextPx, _ = strconv.ParseFloat(string(m[3]), 64)
		r.minTextOf = string(m[4])
		r.wide = string(m[5])
		r.nWide, _ = strconv.Atoi(string(m[6]))
		res = append(res, r)
	}
	return res
}

// printPDF prints page to PDF and returns the page count and the first page's text
// (empty, with ok false, when pdftotext is missing).
func printPDF(t *testing.T, bin string, page []byte, keep string) (pages int, first string, ok bool) {
	t.Helper()
	tmp := t.TempDir()
	file := filepath.Join(tmp, "page.html")
	if err := os.WriteFile(file, page, 0o644); err != nil {
		t.Fatal(err)
	}
	pdf := keep
	args := append(chromiumArgs(tmp), "--no-pdf-header-footer", "--print-to-pdf="+pdf, "file://"+file)
	os.Remove(pdf)
	runChromiumCmd(t, bin, args)
	raw, err := os.ReadFile(pdf)
	if err != nil {
		t.Fatal(err)
	}
	pages = len(pdfPage.FindAll(raw, -1))
	if _, err := exec.LookPath("pdftotext"); err != nil {
		return pages, "", false
	}
	out, err := exec.Command("pdftotext", "-f", "1", "-l", "1", "-layout", pdf, "-").Output()
	if err != nil {
		t.Fatalf("pdftotext: %v", err)
	}
	return pages, string(out), true
}

// layoutPages are the reports the layout check renders: real analyses of the demo
// stretches (Wren works, Fern stalls), their comparison, and a capture read from a
// foreign CSV (semicolons, decimal commas, millivolts, its own column names).
func layoutPages(t *testing.T) map[string]struct {
	html []byte
	day  bool
} {
	wren, fern := wrenAnalysed(t), fernAnalysed(t)
	var cmp bytes.Buffer
	if err := Compare(&cmp, analysed(t, "captures/wren-rc-10min.csv", "wren"), wren, &Options{LabelA: "RC bench", LabelB: "sill"}); err != nil {
		t.Fatal(err)
	}
	return map[string]struct {
		html []byte
		day  bool
	}{
		"wren":     {renderFresh(t, wren, nil), true},
		"fern":     {renderFresh(t, fern, nil), true},
		"wren-day": {renderPage(t, wrenOnce(), nil), true},
		"compare":  {cmp.Bytes(), false},
		"foreign":  {renderFresh(t, foreignAnalysed(t), nil), true},
	}
}

func TestBrowserLayout(t *testing.T) {
	bin := chromiumPath(t)
	dir := shotDir(t)
	for name, pg := range layoutPages(t) {
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			widths := []int{1280, 390}
			for i, m := range measureLayout(t, bin, pg.html, widths) {
				w := widths[i]
				if m.viewport != w {
					t.Errorf("the frame is %d px wide, want %d", m.viewport, w)
				}
				t.Logf("%d px: viewport %d, document %d wide; smallest plot text %.2f px (%s); %d elements past the edge %s",
					w, m.viewport, m.scrollWidth, m.minTextPx, m.minTextOf, m.nWide, m.wide)
				if m.nWide > 0 || m.scrollWidth > m.viewport {
					t.Errorf("%d px: the page is %d px wide in a %d px viewport; past the edge: %s", w, m.scrollWidth, m.viewport, m.wide)
				}
				if w == 390 && m.minTextPx < 9 {
					t.Errorf("390 px: the smallest plot text is %.2f px (%s), under 9 px", m.minTextPx, m.minTextOf)
				}
			}
			pdf := filepath.Join(dir, "layout-"+name+".pdf")
			pages, first, ok := printPDF(t, bin, pg.html, pdf)
			t.Logf("%s: %d printed pages", pdf, pages)
			if pg.day && pages > 6 {
				t.Errorf("%d printed pages for one capture, more than 6", pages)
			}
			if !ok {
				t.Log("pdftotext is not installed (Debian package poppler-utils): the first page's text is not checked")
				return
			}
			if !strings.Contains(first, "Verdict") || (!strings.Contains(first, "FAULT") && !strings.Contains(first, "NOTE") && !strings.Contains(first, "WARNING") && name != "compare") {
				t.Errorf("the first printed page lacks the verdict and findings:\n%s", tail(first, 1500))
			}
		})
	}
}

// foreignAnalysed analyses Wren's RC capture rewritten as another logger would write it:
// semicolons, decimal commas, millivolts, its own column names, read through the
// capture reader's column mapping (analyze.Options.Setup).
func foreignAnalysed(t *testing.T) *analysis.Result {
	t.Helper()
	return analysedForeign(t, "captures/wren-rc-10min.csv")
}
