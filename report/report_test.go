package report

import (
	"bytes"
	"flag"
	"html/template"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"drawerfit/optimize"
	"drawerfit/respplot"
	"drawerfit/synth"
)

var update = flag.Bool("update", false, "rewrite the golden files under testdata/")

// date is the fixed date of the test sheets.
var date = time.Date(2026, 3, 14, 0, 0, 0, 0, time.UTC)

func sheets(t testing.TB) map[string]*Sheet {
	lp := lowpass4(t)
	return map[string]*Sheet{
		"lowpass4-yield": {
			Title: "Logger input anti-alias, board rev C", Boards: 25, Date: date,
			StockDB: "bench-drawer.db", DesignID: "k3f9", Candidate: lp, Yield: sampleYield(lp),
			Notes:    []string{"Fit the op-amps last; the 0603 resistors share one reel."},
			Warnings: []string{"C3 is below 100 pF: stray capacitance matters."},
		},
		"highpass3": {Boards: 1, Date: date, StockDB: "sample-stock.csv", Candidate: highpass3(t)},
		"lowpass5":  {Boards: 4, Candidate: lowpass5(t), Generator: "drawerfit test"},
	}
}

var svgBlock = regexp.MustCompile(`(?s)<svg[^>]*\bid="([^"]+)"[^>]*>.*?</svg>`)

// normalise replaces every drawing by a placeholder naming its id: the
// drawings have their own tests (respplot, schematic) and their coordinates
// are not what these golden files are about.
func normalise(html []byte) string {
	return svgBlock.ReplaceAllString(string(html), `<svg id="$1">[drawing]</svg>`)
}

var sectionStart = regexp.MustCompile(`(?m)^<(section|header) id="([a-z-]+)"`)

// splitSections returns the page's top-level blocks by id.
func splitSections(page string) map[string]string {
	out := map[string]string{}
	idx := sectionStart.FindAllStringSubmatchIndex(page, -1)
	for i, m := range idx {
		end := len(page)
		if i+1 < len(idx) {
			end = idx[i+1][0]
		}
		block := page[m[0]:end]
		closer := "</" + page[m[2]:m[3]] + ">"
		if j := strings.Index(block, closer); j >= 0 {
			block = block[:j+len(closer)]
		}
		out[page[m[4]:m[5]]] = block + "\n"
	}
	return out
}

func TestSectionsGolden(t *testing.T) {
	t.Parallel()
	for name, s := range sheets(t) {
		t.Run(name, func(t *testing.T) {
			b, err := HTML(s)
			if err != nil {
				t.Fatal(err)
			}
			secs := splitSections(normalise(b))
			want := []string{"job", "cautions", "response", "schematics", "bom", "picks", "netlist"}
			if s.Yield != nil {
				want = append(want, "yield")
			}
			if len(s.Warnings)+len(s.Notes)+len(s.Candidate.Design.Notes) > 0 {
				want = append(want, "warnings")
			}
			for _, id := range want {
				if _, ok := secs[id]; !ok {
					t.Errorf("no section %q", id)
				}
			}
			if len(secs) != len(want) {
				t.Errorf("sections %d, want %d", len(secs), len(want))
			}
			dir := filepath.Join("testdata", name)
			if *update {
				if err := os.MkdirAll(dir, 0o755); err != nil {
					t.Fatal(err)
				}
			}
			for id, got := range secs {
				path := filepath.Join(dir, id+".html")
				if *update {
					if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
						t.Fatal(err)
					}
					continue
				}
				w, err := os.ReadFile(path)
				if err != nil {
					t.Fatalf("%v (run go test ./report -update to create it)", err)
				}
				if string(w) != got {
					t.Errorf("%s differs (run go test ./report -update after checking):\n--- got\n%s", path, got)
				}
			}
		})
	}
}

func TestUserTextEscaped(t *testing.T) {
	t.Parallel()
	c := lowpass4(t)
	c.Sections[0].Components[0].Parts[0].Location = `<img src=x onerror=alert(2)>`
	s := &Sheet{
		Title:     `Filter <script>alert("title")</script>`,
		Candidate: c,
		Notes:     []string{`check <script>alert("note")</script> & the bias`},
		Warnings:  []string{`<b>bold?</b>`},
		StockDB:   `drawer "A" & <B>`,
		Cautions:  []string{`<i>extra</i>`},
		Picks:     []PickLine{{Location: `<td>bin</td>`, Value: "1 kΩ", Quantity: 1, Refs: []string{"R1"}}},
	}
	b, err := HTML(s)
	if err != nil {
		t.Fatal(err)
	}
	page := string(b)
	for _, bad := range []string{"<script", "<img", "<b>bold", "<i>extra", "<td>bin"} {
		if strings.Contains(page, bad) {
			t.Errorf("unescaped %q in the page", bad)
		}
	}
	for _, want := range []string{
		`check &lt;script&gt;alert(&#34;note&#34;)&lt;/script&gt; &amp; the bias`,
		`Filter &lt;script&gt;alert(&#34;title&#34;)&lt;/script&gt;`,
		`&lt;img src=x onerror=alert(2)&gt;`, // in the BOM and in the schematic's bin label
		`drawer &#34;A&#34; &amp; &lt;B&gt;`,
		`&lt;td&gt;bin&lt;/td&gt;`,
	} {
		if !strings.Contains(page, want) {
			t.Errorf("page lacks escaped text %q", want)
		}
	}
}

// TestSelfContained checks that the page loads nothing: no scripts, links,
// images, imports or URLs other than the SVG namespace.
func TestSelfContained(t *testing.T) {
	t.Parallel()
	for name, s := range sheets(t) {
		t.Run(name, func(t *testing.T) {
			b, err := HTML(s)
			if err != nil {
				t.Fatal(err)
			}
			page := string(b)
			for _, bad := range []string{"<script", "<link", "<img", "<iframe", "<object", "@import", "url(", "src=", "href="} {
				if strings.Contains(page, bad) {
					t.Errorf("page contains %q", bad)
				}
			}
			rest := strings.ReplaceAll(page, `xmlns="http://www.w3.org/2000/svg"`, "")
			rest = strings.ReplaceAll(rest, `xmlns:xlink="http://www.w3.org/1999/xlink"`, "")
			if i := strings.Index(rest, "://"); i >= 0 {
				t.Errorf("page has an address: %q", rest[max(0, i-30):min(len(rest), i+30)])
			}
			if !strings.HasPrefix(page, "<!DOCTYPE html>") || !strings.Contains(page, `<meta charset="utf-8">`) {
				t.Error("page lacks its doctype or charset")
			}
			if !strings.Contains(page, "@page") || !strings.Contains(page, "@media print") {
				t.Error("page has no print rules")
			}
		})
	}
}

func TestCautionsAlways(t *testing.T) {
	t.Parallel()
	b, err := HTML(&Sheet{Candidate: lowpass5(t), Cautions: []string{"Keep the input below 5 V."}})
	if err != nil {
		t.Fatal(err)
	}
	caut := splitSections(string(b))["cautions"]
	// The three cautions required by the yield issue: bench verification,
	// capacitor voltage ratings, qualified review for safety-relevant,
	// medical or mains-connected use.
	for _, want := range []string{"bench before production", "voltage ratings", "medical or mains-connected", "qualified person", "Keep the input below 5 V."} {
		if !strings.Contains(caut, want) {
			t.Errorf("cautions lack %q", want)
		}
	}
}

func TestDerivePicks(t *testing.T) {
	t.Parallel()
	c := lowpass4(t)
	for _, boards := range []int{1, 25} {
		t.Run(strings.Repeat("x", 0)+map[int]string{1: "one board", 25: "25 boards"}[boards], func(t *testing.T) {
			picks := DerivePicks(c, boards)
			total, refs := 0, map[string]bool{}
			for i, p := range picks {
				if i > 0 && picks[i-1].Location > p.Location {
					t.Errorf("pick list not grouped by location: %q before %q", picks[i-1].Location, p.Location)
				}
				if p.Quantity != boards*len(p.Refs) {
					t.Errorf("%s: quantity %d for %d refs on %d boards", p.Value, p.Quantity, len(p.Refs), boards)
				}
				total += p.Quantity
				for _, r := range p.Refs {
					if refs[r] {
						t.Errorf("%s picked twice", r)
					}
					refs[r] = true
				}
			}
			if total != c.PartCount*boards {
				t.Errorf("total %d parts, want %d × %d", total, c.PartCount, boards)
			}
			if len(picks) != c.UniqueParts {
				t.Errorf("%d pick lines, want one per stock row (%d)", len(picks), c.UniqueParts)
			}
			for _, want := range []string{"R1a", "R1b"} {
				if !refs[want] {
					t.Errorf("no pick fills %s", want)
				}
			}
		})
	}
}

func TestMadeOf(t *testing.T) {
	t.Parallel()
	r := func(v float64) optimize.Part { return optimize.Part{Value: v} }
	cases := []struct {
		name string
		c    optimize.Component
		want string
	}{
		{"series resistors", optimize.Component{Kind: synth.Resistor, Arrangement: synth.Series, Parts: []optimize.Part{r(12e3), r(3.3e3)}}, "12 kΩ + 3.3 kΩ series"},
		{"parallel capacitors", optimize.Component{Kind: synth.Capacitor, Arrangement: synth.Parallel, Parts: []optimize.Part{r(1e-9), r(470e-12)}}, "1 nF + 470 pF parallel"},
		{"single", optimize.Component{Kind: synth.Resistor, Parts: []optimize.Part{r(10e3)}}, "one part"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if got := MadeOf(c.c); got != c.want {
				t.Errorf("MadeOf = %q, want %q", got, c.want)
			}
		})
	}
}

func TestNetlistUsesPartNames(t *testing.T) {
	t.Parallel()
	c := lowpass4(t)
	b, err := HTML(&Sheet{Candidate: c})
	if err != nil {
		t.Fatal(err)
	}
	nl := splitSections(string(b))["netlist"]
	// Two parts in series make R1: R1a and R1b, with a node between them
	// (synth.Netlist writes one element per physical part).
	for _, want := range []string{"R1a ", "R1b ", "V1 in 0 AC 1", ".ac"} {
		if !strings.Contains(nl, want) {
			t.Errorf("netlist lacks %q:\n%s", want, nl)
		}
	}
	given := "* my own netlist\n.end\n"
	b, err = HTML(&Sheet{Candidate: c, Netlist: given})
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(b, []byte("* my own netlist")) {
		t.Error("given netlist not shown")
	}
}

func TestBadSheets(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name string
		mod  func(s *Sheet)
	}{
		{"no candidate", func(s *Sheet) { s.Candidate = nil }},
		{"no design", func(s *Sheet) { s.Candidate.Design = nil }},
		{"missing component", func(s *Sheet) {
			s.Candidate.Sections[0].Components = s.Candidate.Sections[0].Components[:1]
		}},
		{"component without parts", func(s *Sheet) { s.Candidate.Sections[1].Components[0].Parts = nil }},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			s := &Sheet{Candidate: lowpass4(t)}
			c.mod(s)
			if _, err := HTML(s); err == nil {
				t.Error("no error")
			}
		})
	}
}

func TestSpecLine(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name string
		c    *optimize.Candidate
		want string
	}{
		{"butterworth low-pass", lowpass4(t), "Butterworth low-pass, order 4: at most 3.01 dB down at 1 kHz, at least 30 dB down from 3 kHz"},
		{"chebyshev high-pass", highpass3(t), "Chebyshev high-pass, order 3: 0.5 dB ripple above 300 Hz, at least 30 dB down below 100 Hz"},
		{"bessel by order", lowpass5(t), "Bessel low-pass, order 5: at most 3.01 dB down at 2 kHz"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if got := SpecLine(c.c.Design); got != c.want {
				t.Errorf("SpecLine = %q, want %q", got, c.want)
			}
		})
	}
}

func TestWritePNGs(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	paths, err := WritePNGs(&Sheet{Candidate: lowpass4(t)}, dir, "lp")
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"lp-magnitude.png", "lp-phase.png", "lp-group-delay.png"}
	if len(paths) != len(want) {
		t.Fatalf("paths %q", paths)
	}
	for i, p := range paths {
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		if filepath.Base(p) != want[i] || !bytes.HasPrefix(b, []byte("\x89PNG\r\n\x1a\n")) {
			t.Errorf("%s is not the PNG %s", p, want[i])
		}
	}
	if _, err := WritePNGs(&Sheet{}, dir, ""); err == nil {
		t.Error("no error for a sheet without a candidate")
	}
}

func TestResponseSketch(t *testing.T) {
	t.Parallel()
	// The terminal sketch of a candidate: the nominal curve marks and the
	// edges from the design's specification.
	s, err := respplot.Sketch(Response(lowpass4(t), respplot.Limits{}), 60, 12)
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"* nominal", "fp 1 kHz, fs 3 kHz", "0 dB |"} {
		if !strings.Contains(s, want) {
			t.Errorf("sketch lacks %q:\n%s", want, s)
		}
	}
}

// TestHeaderVerdicts: the header says what was checked and the verdict of
// each, and never a bare "meets" above a failing check.
func TestHeaderVerdicts(t *testing.T) {
	t.Parallel()
	lp := lowpass4(t) // misses the specification with its rounded parts (3.19 dB at fp, allowed 3.01)
	for _, tc := range []struct {
		name  string
		sheet *Sheet
		want  []string
		not   []string
	}{
		{"nominal fails", &Sheet{Candidate: lp},
			[]string{"does not meet the specification", "With an op-amp model", "not checked", "Not ready to build as it stands"},
			[]string{"Passes every check"}},
		{"yield below target", &Sheet{Candidate: lp, Yield: &YieldSummary{Yield: 0.5, CILow: 0.45, CIHigh: 0.55, Trials: 300, Target: 0.95}},
			[]string{"50% pass", "below the target 95%", "Failed: Nominal part values, ideal op-amps; Yield with the stock"},
			nil},
		{"amplifier from stock", func() *Sheet {
			c := *lp
			c.Amp = &optimize.Amplifier{StockID: 7, Label: "bag 7 dual", Channels: 2, Model: synth.OpAmp{GBW: 1e6}}
			return &Sheet{Candidate: &c}
		}(), []string{"with the op-amp model (bag 7 dual: single pole, 1 MHz gain-bandwidth)"},
			[]string{"With an op-amp model", "ideal op-amps</td>"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			b, err := HTML(tc.sheet)
			if err != nil {
				t.Fatal(err)
			}
			head := splitSections(normalise(b))["job"]
			for _, w := range tc.want {
				if !strings.Contains(head, template.HTMLEscapeString(w)) {
					t.Errorf("header lacks %q:\n%s", w, head)
				}
			}
			for _, w := range tc.not {
				if strings.Contains(head, template.HTMLEscapeString(w)) {
					t.Errorf("header has %q:\n%s", w, head)
				}
			}
		})
	}
}

func TestUnusedChannels(t *testing.T) {
	t.Parallel()
	// Three sections on one quad package: channel D is left over; a dual
	// fully used and single packages leave nothing to say.
	amps := []Amplifier{{Ref: "U1", Channel: "A", Channels: 4}, {Ref: "U1", Channel: "B", Channels: 4}, {Ref: "U1", Channel: "C", Channels: 4}}
	if got := unusedChannels(amps); !strings.Contains(got, "Unused channel U1D:") {
		t.Errorf("quad with three used: %q", got)
	}
	if got := unusedChannels([]Amplifier{{Ref: "U1", Channel: "A", Channels: 2}, {Ref: "U1", Channel: "B", Channels: 2}}); got != "" {
		t.Errorf("dual fully used: %q", got)
	}
	if got := unusedChannels([]Amplifier{{Ref: "U1"}, {Ref: "U2"}}); got != "" {
		t.Errorf("single packages: %q", got)
	}
}
