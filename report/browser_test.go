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

	"drawerfit/optimize"
	"drawerfit/synth"
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
	t.Parallel()
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
	s := browserSheet(lp, note)
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
			printedText(t, pdf, s)
			pages := len(pageObject.FindAll(b, -1))
			// Two sections of a 4th-order design: header and warnings,
			// response and yield, the schematics, the parts lists and the
			// printed netlist; more than eight pages means the print layout
			// broke (a judgement, no source).
			if pages < 2 || pages > 8 {
				t.Errorf("%d pages, want 2 to 8", pages)
			}
			t.Logf("%s: %d pages", paper.name, pages)
		})
	}
}

// browserSheet is the sheet the browser prints: the fixture with yield,
// warnings, bias resistors (one of two parts) and two op-amp channels of one
// stocked dual package with its pinout.
func browserSheet(lp *optimize.Candidate, note string) *Sheet {
	rows := stockRows{ids: map[string]int64{}, next: 500}
	r := func(v float64) optimize.Part { return rows.part(synth.Resistor, v) }
	bias1 := optimize.Component{Ref: NextDesignator(lp, "R", 0), Kind: synth.Resistor, Arrangement: synth.Series,
		Parts: []optimize.Part{r(56e3), r(8.2e3)}, Value: 64.2e3}
	bias2 := optimize.Component{Ref: NextDesignator(lp, "R", 1), Kind: synth.Resistor, Arrangement: synth.Single,
		Parts: []optimize.Part{r(68e3)}, Value: 68e3}
	// Channel A and B of the common dual op-amp pinout (outputs 1 and 7,
	// - inputs 2 and 6, + inputs 3 and 5, V- 4, V+ 8; from memory, docs/check-values.md,
	// "Amplifier packages").
	dual := "dual op-amp, invented part DX-2, SOIC-8"
	return &Sheet{
		Title: "Logger input anti-alias, board rev C", Boards: 25, Date: date,
		StockDB: "bench-drawer.db", Candidate: lp, Yield: sampleYield(lp), Notes: []string{note},
		Warnings: []string{
			"C3 is below 100 pF: stray capacitance matters.",
			"the nominal response sits on the passband limit (0.025 dB inside it at fp 1 kHz): 49% of the boards fail there",
		},
		BiasResistors: []BiasResistor{
			{Section: 1, Component: bias1, Ohms: 64.5e3, Path: "R1+R2"},
			{Section: 2, Component: bias2, Ohms: 66e3, Path: "R3+R4"},
		},
		Amplifiers: []Amplifier{
			{Ref: "U1", Channel: "A", Section: 1, Part: dual, Location: "IC-1", StockID: 900,
				Pins: &Pins{Plus: "3", Minus: "2", Out: "1", VPos: "8", VNeg: "4"}},
			{Ref: "U1", Channel: "B", Section: 2, Part: dual, Location: "IC-1", StockID: 900,
				Pins: &Pins{Plus: "5", Minus: "6", Out: "7", VPos: "8", VNeg: "4"}},
		},
		Checks: []Check{{What: "With the op-amp model (single pole, 1 MHz gain-bandwidth, 100 dB DC gain)",
			Verdict: "meets the specification (passband 3.02 dB); gain-bandwidth rule met in every section", Status: CheckPassed}},
	}
}

// pdftotextPath is where Debian's poppler-utils installs pdftotext (.ci/run
// installs it).
const pdftotextPath = "/usr/bin/pdftotext"

var spaces = regexp.MustCompile(`\s+`)

// printedText checks the text of the printed PDF: the whole netlist, every
// designator of every part and amplifier, and every warning must be on
// paper (a closed <details> element, for one, prints only its summary).
func printedText(t *testing.T, pdf string, s *Sheet) {
	t.Helper()
	if _, err := os.Stat(pdftotextPath); err != nil {
		t.Logf("printed text not checked: %s not found (apt-get install poppler-utils)", pdftotextPath)
		return
	}
	out, err := exec.Command(pdftotextPath, "-enc", "UTF-8", pdf, "-").Output()
	if err != nil {
		t.Fatalf("pdftotext: %v", err)
	}
	text := spaces.ReplaceAllString(string(out), " ")
	flat := func(s string) string { return spaces.ReplaceAllString(strings.TrimSpace(s), " ") }

	// The netlist, line by line (the printed page may wrap a long line).
	netlist := withBiasComments(synth.Netlist(s.Candidate.Stages(),
		synth.NetlistOptions{Title: s.Title, Refs: PartRefs(s.Candidate)}), s.BiasResistors)
	for _, line := range strings.Split(strings.TrimSpace(netlist), "\n") {
		if !strings.Contains(text, flat(line)) {
			t.Errorf("the printed netlist lacks %q", line)
		}
	}
	// Every designator, as a word of its own.
	var refs []string
	for i, sf := range s.Candidate.Sections {
		for j, comp := range sf.Components {
			refs = append(refs, comp.Ref)
			for k := range comp.Parts {
				refs = append(refs, PartRefs(s.Candidate)(i, j, k))
			}
		}
	}
	for _, b := range s.BiasResistors {
		refs = append(refs, b.Component.Ref)
	}
	for _, a := range s.Amplifiers {
		refs = append(refs, a.Name())
	}
	for _, r := range refs {
		if !regexp.MustCompile(`(^|[^A-Za-z0-9])` + regexp.QuoteMeta(r) + `($|[^A-Za-z0-9])`).MatchString(text) {
			t.Errorf("the printed sheet lacks designator %s", r)
		}
	}
	for _, w := range s.Warnings {
		if !strings.Contains(text, flat(w)) {
			t.Errorf("the printed sheet lacks the warning %q", w)
		}
	}
	for _, want := range []string{DecouplingNote, "see the part's data sheet", "Not ready to build"} {
		if want == "see the part's data sheet" {
			continue // every amplifier here has its pinout
		}
		if !strings.Contains(text, flat(want)) {
			t.Errorf("the printed sheet lacks %q", want)
		}
	}
}
