//go:build unix

package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"image/png"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"golang.org/x/net/html"

	"capcycle/analyze/analysis"
	"capcycle/firmware-protocol/emulator"
	"capcycle/logger/capture"
)

// TestDemo runs "capcycle demo" for an hour of model time from 10:00, with the
// captures kept, and checks every product: both captures parse, Wren fires with no
// fault, Fern stalls with the never-reaches-trigger finding, both reports parse as HTML
// and hold the verdict that was printed, and (where Chromium is installed) both
// reports render in a real browser.
func TestDemo(t *testing.T) {
	dir := t.TempDir()
	var stdout, stderr bytes.Buffer
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
	defer cancel()
	args := []string{"demo", "--out", dir, "--hours", "1", "--start", "10:00", "--keep"}
	if code := run(ctx, args, &env{stdin: strings.NewReader(""), stdout: &stdout, stderr: &stderr}); code != 0 {
		t.Fatalf("demo: exit %d\nstdout:\n%s\nstderr:\n%s", code, stdout.String(), stderr.String())
	}
	t.Logf("demo printed:\n%s", stdout.String())

	results := map[string]*analysis.Result{}
	for _, name := range []string{"wren", "fern"} {
		t.Run(name+"/capture", func(t *testing.T) {
			rows, span := demoReadCapture(t, filepath.Join(dir, name+".capture.csv"))
			// An hour at two averaged rows a second at the least.
			if rows < 7000 || span < 3500 {
				t.Errorf("capture holds %d rows over %.0f s; want at least 7000 over about 3600 s", rows, span)
			}
		})
		raw, err := os.ReadFile(filepath.Join(dir, name+".analysis.json"))
		if err != nil {
			t.Fatalf("analysis JSON: %v", err)
		}
		var r analysis.Result
		if err := json.Unmarshal(raw, &r); err != nil {
			t.Fatalf("%s.analysis.json does not parse: %v", name, err)
		}
		results[name] = &r
		for _, want := range []string{filepath.Join(dir, name+".html"), filepath.Join(dir, name+".cycles.csv")} {
			if !strings.Contains(stdout.String(), want) {
				t.Errorf("the demo did not print the path %s", want)
			}
		}
	}

	t.Run("wren/fires", func(t *testing.T) {
		r := results["wren"]
		full := 0
		for _, c := range r.Cycles {
			if c.Kind == "full" {
				full++
			}
		}
		// Late morning sun on a south window: the rover fires every few seconds.
		if full < 100 {
			t.Errorf("Wren: %d full cycles in an hour of morning sun; want well over 100", full)
		}
		for _, f := range r.Findings {
			if f.Severity == "fault" {
				t.Errorf("Wren has a fault finding: %s: %s", f.Code, f.Message)
			}
		}
		if !strings.Contains(stdout.String(), "Wren: Works") {
			t.Errorf("the printed verdict for Wren does not say it works:\n%s", stdout.String())
		}
	})
	t.Run("fern/stalls", func(t *testing.T) {
		r := results["fern"]
		if len(r.Cycles) != 0 {
			t.Errorf("Fern: %d cycles; the sculpture in the shade should not fire", len(r.Cycles))
		}
		found := false
		for _, f := range r.Findings {
			found = found || f.Code == "never-reaches-trigger"
		}
		if !found {
			t.Errorf("Fern lacks the never-reaches-trigger finding: %+v", r.Findings)
		}
		if !strings.Contains(stdout.String(), "Fern: Stalls") {
			t.Errorf("the printed verdict for Fern does not say it stalls:\n%s", stdout.String())
		}
	})
	for _, name := range []string{"wren", "fern"} {
		t.Run(name+"/html", func(t *testing.T) {
			page := filepath.Join(dir, name+".html")
			raw, err := os.ReadFile(page)
			if err != nil {
				t.Fatal(err)
			}
			doc, err := html.Parse(bytes.NewReader(raw))
			if err != nil {
				t.Fatalf("%s does not parse as HTML: %v", page, err)
			}
			text := demoHTMLText(doc)
			// The verdict line the demo printed is the one the report leads with.
			var verdict string
			for _, line := range strings.Split(stdout.String(), "\n") {
				if strings.HasPrefix(line, results[name].Source.Profile+": ") {
					verdict = strings.TrimPrefix(line, results[name].Source.Profile+": ")
				}
			}
			if verdict == "" || !strings.Contains(demoCollapse(text), demoCollapse(verdict)) {
				t.Errorf("report %s does not hold the printed verdict %q", page, verdict)
			}
			if n := strings.Count(string(raw), "<svg"); n < 2 {
				t.Errorf("report %s has %d inline SVG plots; want several", page, n)
			}
		})
	}
	t.Run("browser", func(t *testing.T) { demoBrowserCheck(t, dir) })
}

// demoReadCapture reads a capture through the analyser's reader and returns its row count
// and time span.
func demoReadCapture(t *testing.T, path string) (rows int, spanS float64) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	r := capture.NewReader(f, path)
	ts, vs := make([]float64, 8192), make([]float64, 8192)
	first, last := 0.0, 0.0
	for {
		n, err := r.Read(ts, vs)
		if n > 0 {
			if rows == 0 {
				first = ts[0]
			}
			last = ts[n-1]
			rows += n
		}
		if err == io.EOF {
			return rows, last - first
		}
		if err != nil {
			t.Fatalf("%s does not parse: %v", path, err)
		}
	}
}

func demoHTMLText(n *html.Node) string {
	var b strings.Builder
	var walk func(*html.Node)
	walk = func(n *html.Node) {
		if n.Type == html.TextNode {
			b.WriteString(n.Data)
		}
		if n.Type == html.ElementNode && (n.Data == "style" || n.Data == "svg") {
			return
		}
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			walk(c)
		}
	}
	walk(n)
	return b.String()
}

// demoCollapse folds runs of white space (including no-break spaces) to one space.
func demoCollapse(s string) string {
	return strings.Join(strings.Fields(strings.ReplaceAll(s, "\u00a0", " ")), " ")
}

// The browser check's window: a desktop width, and tall enough for the verdict, the
// findings and the first plots.
const demoShotW, demoShotH = 1200, 2400

// demoBrowserCheck opens both demo reports in headless Chromium, as a reader would,
// and checks the screenshot: it decodes at the window size, is not blank (ink on at
// least 3 % of it) and the browser printed no console message (the page has no
// scripts, so any is a fault). The screenshots are kept in
// os.TempDir()/capcycle-screenshots as demo-wren.png and demo-fern.png.
func demoBrowserCheck(t *testing.T, dir string) {
	if testing.Short() {
		t.Skip("browser check skipped in -short mode")
	}
	bin, err := exec.LookPath("chromium")
	if err != nil {
		t.Skip("chromium is not installed (Debian package chromium); skipping the browser check of the demo reports")
	}
	shots := filepath.Join(os.TempDir(), "capcycle-screenshots")
	if err := os.MkdirAll(shots, 0o755); err != nil {
		t.Fatal(err)
	}
	for _, name := range []string{"wren", "fern"} {
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			shot := filepath.Join(shots, "demo-"+name+".png")
			os.Remove(shot)
			ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
			defer cancel()
			cmd := exec.CommandContext(ctx, bin,
				"--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
				"--disable-background-networking", "--disable-component-update", "--disable-sync",
				"--user-data-dir="+t.TempDir(), "--enable-logging=stderr", "--v=0",
				"--host-resolver-rules=MAP * ~NOTFOUND",
				"--screenshot="+shot, fmt.Sprintf("--window-size=%d,%d", demoShotW, demoShotH),
				"file://"+filepath.Join(dir, name+".html"))
			// Without a session bus Chromium waits out D-Bus timeouts; an address that
			// fails at once keeps the run short.
			cmd.Env = append(os.Environ(), "DBUS_SESSION_BUS_ADDRESS=unix:path=/nonexistent")
			var log bytes.Buffer
			cmd.Stdout, cmd.Stderr = &log, &log
			if err := cmd.Run(); err != nil {
				t.Fatalf("chromium: %v\n%s", err, demoTail(log.String(), 2000))
			}
			raw, err := os.ReadFile(shot)
			if err != nil {
				t.Fatalf("no screenshot: %v\n%s", err, demoTail(log.String(), 2000))
			}
			img, err := png.Decode(bytes.NewReader(raw))
			if err != nil {
				t.Fatalf("screenshot does not decode: %v", err)
			}
			if b := img.Bounds(); b.Dx() != demoShotW || b.Dy() != demoShotH {
				t.Errorf("screenshot is %dx%d, want %dx%d", b.Dx(), b.Dy(), demoShotW, demoShotH)
			}
			ink, total := 0, 0
			b := img.Bounds()
			for y := b.Min.Y; y < b.Max.Y; y += 3 {
				for x := b.Min.X; x < b.Max.X; x += 3 {
					r, g, bl, _ := img.At(x, y).RGBA()
					total++
					if r>>8 < 200 || g>>8 < 200 || bl>>8 < 200 {
						ink++
					}
				}
			}
			frac := float64(ink) / float64(total)
			t.Logf("screenshot %s: %.1f %% ink", shot, 100*frac)
			if frac < 0.03 {
				t.Errorf("the %s report looks blank in the browser: %.1f %% ink", name, 100*frac)
			}
			for _, line := range strings.Split(log.String(), "\n") {
				if strings.Contains(line, ":CONSOLE") {
					t.Errorf("browser console: %s", line)
				}
			}
		})
	}
}

func demoTail(s string, n int) string {
	if len(s) > n {
		return "…" + s[len(s)-n:]
	}
	return s
}

// TestDemoEmulated runs the demo on the emulated board (the real firmware in simavr,
// its ADC driven by the model) for three minutes of late-morning model time.
func TestDemoEmulated(t *testing.T) {
	if testing.Short() {
		t.Skip("the emulated board is skipped in -short mode")
	}
	if err := emulator.Available(); err != nil {
		t.Skipf("emulated board not available: %v", err)
	}
	dir := t.TempDir()
	var stdout, stderr bytes.Buffer
	ctx, cancel := context.WithTimeout(context.Background(), 4*time.Minute)
	defer cancel()
	args := []string{"demo", "--board", "emulated", "--out", dir, "--hours", "0.05", "--start", "10:00"}
	if code := run(ctx, args, &env{stdin: strings.NewReader(""), stdout: &stdout, stderr: &stderr}); code != 0 {
		t.Fatalf("demo: exit %d\nstdout:\n%s\nstderr:\n%s", code, stdout.String(), stderr.String())
	}
	t.Logf("demo printed:\n%s", stdout.String())
	for name, want := range map[string]string{"wren": "Works", "fern": "Stalls"} {
		raw, err := os.ReadFile(filepath.Join(dir, name+".analysis.json"))
		if err != nil {
			t.Fatal(err)
		}
		var r analysis.Result
		if err := json.Unmarshal(raw, &r); err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(r.Source.Path, name+".capture.csv") || r.Samples < 300 {
			t.Errorf("%s: %d samples from %s; want at least 300 (three minutes at 2 rows a second)", name, r.Samples, r.Source.Path)
		}
		if !strings.Contains(stdout.String(), r.Source.Profile+": "+want) {
			t.Errorf("%s: the printed verdict does not start with %q", name, want)
		}
		if name == "wren" && len(r.Cycles) < 20 {
			t.Errorf("Wren on the emulated board: %d cycles in three minutes of morning sun; want well over 20", len(r.Cycles))
		}
	}
}
