package report

import (
	"bytes"
	"context"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"
)

// chromiumPath is where Debian's chromium package installs the browser
// (.ci/run installs it).
const chromiumPath = "/usr/bin/chromium"

// chromium runs the browser headless on one file with no network and a
// fresh profile, and returns its standard output.
func chromium(t *testing.T, args ...string) []byte {
	t.Helper()
	profile := t.TempDir()
	base := []string{
		"--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
		"--disable-background-networking", "--disable-component-update", "--disable-sync",
		"--disable-extensions", "--disable-dev-shm-usage", "--hide-scrollbars",
		// Resolve no host at all: the page must not need the network.
		"--host-resolver-rules=MAP * ~NOTFOUND",
		"--user-data-dir=" + profile,
	}
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
	defer cancel()
	cmd := exec.CommandContext(ctx, chromiumPath, append(base, args...)...)
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	if err := cmd.Run(); err != nil {
		t.Fatalf("chromium %v: %v\n%s", args, err, errb.String())
	}
	return out.Bytes()
}

var pageObject = regexp.MustCompile(`/Type\s*/Page\b`)

// TestBrowser renders a build sheet in headless Chromium: the screenshot is
// not blank, the DOM has the plots and schematics (and the note written
// with <script> as text), and the printed PDF has a small number of pages on
// Letter (Chromium's default paper) and on A4.
func TestBrowser(t *testing.T) {
	if _, err := os.Stat(chromiumPath); err != nil {
		t.Skipf("browser test skipped: %s not found (apt-get install chromium)", chromiumPath)
	}
	if testing.Short() {
		t.Skip("browser test skipped in -short mode")
	}
	dir := t.TempDir()
	if d := os.Getenv("DRAWERFIT_BROWSER_OUT"); d != "" {
		dir = d // keep the files to look at
	}
	lp := lowpass4(t)
	note := `<script>document.title="hijacked"</script> keep C3 away from the heatsink`
	s := &Sheet{
		Title: "Logger input anti-alias, board rev C", Boards: 25, Date: date,
		StockDB: "bench-drawer.db", Candidate: lp, Yield: sampleYield(lp), Notes: []string{note},
		Warnings: []string{"C3 is below 100 pF: stray capacitance matters."},
	}
	page, err := HTML(s)
	if err != nil {
		t.Fatal(err)
	}
	htmlPath := filepath.Join(dir, "sheet.html")
	if err := os.WriteFile(htmlPath, page, 0o644); err != nil {
		t.Fatal(err)
	}
	url := "file://" + htmlPath

	t.Run("screenshot", func(t *testing.T) {
		shot := filepath.Join(dir, "sheet.png")
		chromium(t, "--window-size=1000,1400", "--screenshot="+shot, url)
		b, err := os.ReadFile(shot)
		if err != nil {
			t.Fatal(err)
		}
		img, err := png.Decode(bytes.NewReader(b))
		if err != nil {
			t.Fatal(err)
		}
		bounds := img.Bounds()
		ink, total := 0, 0
		for y := bounds.Min.Y; y < bounds.Max.Y; y += 2 {
			for x := bounds.Min.X; x < bounds.Max.X; x += 2 {
				r, g, b, _ := img.At(x, y).RGBA()
				total++
				if r < 0xf000 || g < 0xf000 || b < 0xf000 {
					ink++
				}
			}
		}
		// The first screen holds the title, the job line, the cautions box
		// and the start of the magnitude plot: a few percent of the pixels
		// carry ink; a blank or failed render has none (threshold: a
		// judgement, no source).
		if frac := float64(ink) / float64(total); frac < 0.02 {
			t.Errorf("screenshot looks blank: %.2f %% of pixels not white", 100*frac)
		}
	})

	t.Run("dom", func(t *testing.T) {
		dom := string(chromium(t, "--dump-dom", url))
		for _, want := range []string{
			`id="plot-magnitude"`, `id="plot-phase"`, `id="plot-group-delay"`,
			`class="schematic"`, `id="sch-1"`, `id="sch-2"`,
			`class="element resistor"`, `class="element capacitor"`, `class="opamp"`,
			`id="bom"`, `id="picks"`, `id="cautions"`, `id="netlist"`,
			"keep C3 away from the heatsink",
		} {
			if !strings.Contains(dom, want) {
				t.Errorf("DOM lacks %q", want)
			}
		}
		// The note's <script> is text: the DOM holds no script element and
		// the page title is untouched.
		if strings.Contains(dom, "<script") {
			t.Error("a script element reached the DOM")
		}
		if !strings.Contains(dom, `&lt;script&gt;document.title="hijacked"&lt;/script&gt;`) {
			t.Error("the note's markup is not shown as text")
		}
		if !strings.Contains(dom, "<title>Logger input anti-alias, board rev C</title>") {
			t.Error("page title changed")
		}
	})

	for _, paper := range []struct {
		name, css string
	}{{"letter", ""}, {"a4", "<style>@page { size: A4; }</style>"}} {
		t.Run("pdf-"+paper.name, func(t *testing.T) {
			src := htmlPath
			if paper.css != "" {
				src = filepath.Join(dir, "sheet-"+paper.name+".html")
				p := strings.Replace(string(page), "</head>", paper.css+"\n</head>", 1)
				if err := os.WriteFile(src, []byte(p), 0o644); err != nil {
					t.Fatal(err)
				}
			}
			pdf := filepath.Join(dir, "sheet-"+paper.name+".pdf")
			chromium(t, "--no-pdf-header-footer", "--print-to-pdf="+pdf, "file://"+src)
			b, err := os.ReadFile(pdf)
			if err != nil {
				t.Fatal(err)
			}
			if !bytes.HasPrefix(b, []byte("%PDF-")) {
				t.Fatal("not a PDF")
			}
			pages := len(pageObject.FindAll(b, -1))
			// Two sections of a 4th-order design: response and yield, the
			// schematics, and the pick list on its own page; more than six
			// pages means the print layout broke (a judgement, no source).
			if pages < 2 || pages > 6 {
				t.Errorf("%d pages, want 2 to 6", pages)
			}
			t.Logf("%s: %d pages", paper.name, pages)
		})
	}
}
