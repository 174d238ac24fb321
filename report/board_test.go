package report

import (
	"regexp"
	"strings"
	"testing"
	"time"
)

func TestBoardHTML(t *testing.T) {
	t.Parallel()
	lp, hp := lowpass4(t), highpass3(t)
	b := &Board{
		Title: "Tide gauge logger <rev B>", Boards: 25, Date: time.Date(2030, 3, 1, 0, 0, 0, 0, time.UTC),
		StockDB: "stock.db", DesignID: "ab12cd",
		Labels: []string{"anti-alias", "drift <script>alert(1)</script>"},
		Sheets: []*Sheet{{Title: "anti-alias", Candidate: lp, Boards: 25}, {Title: "drift high-pass", Candidate: hp, Boards: 25}},
		Picks:  []PickLine{{Location: "A1", StockID: 3, Value: "10 kΩ 1% 0603", Quantity: 50, Refs: []string{"F1.R1", "F2.R2"}}},
	}
	page, err := BoardHTML(b)
	if err != nil {
		t.Fatal(err)
	}
	doc := string(page)
	for _, want := range []string{
		"<h1>Tide gauge logger &lt;rev B&gt;</h1>", `id="board-picks"`, "F1.R1 F2.R2",
		`<section class="filter-sheet" id="filter-1">`, `<section class="filter-sheet" id="filter-2">`,
		"drift &lt;script&gt;", "Verify the circuit on the bench",
	} {
		if !strings.Contains(doc, want) {
			t.Errorf("board sheet lacks %q", want)
		}
	}
	if strings.Count(doc, "<html") != 1 || strings.Count(doc, "<body>") != 1 || strings.Count(doc, "<style>") < 1 {
		t.Error("the board sheet is not one document")
	}
	if strings.Contains(doc, "<script") {
		t.Error("user text was not escaped")
	}
	if strings.Count(doc, `class="schematic`) < 2 && strings.Count(doc, "<svg") < 4 {
		t.Error("the filters' drawings are missing")
	}
	// Every element id once on the page, and every part described one way
	// (the stock's "1%", never "1 %").
	ids := map[string]int{}
	for _, m := range idAttr.FindAllStringSubmatch(doc, -1) {
		ids[m[1]]++
	}
	for id, n := range ids {
		if n > 1 {
			t.Errorf("id %q appears %d times", id, n)
		}
	}
	if len(ids) < 50 {
		t.Errorf("only %d ids found; the pattern is wrong", len(ids))
	}
	if strings.Contains(doc, "1 %") || strings.Contains(doc, "5 %") {
		t.Error(`a part is described with "1 %" or "5 %" (the stock writes "1%")`)
	}
	if _, err := BoardHTML(&Board{}); err == nil {
		t.Error("a board without filters was accepted")
	}
}

var idAttr = regexp.MustCompile(`\bid="([^"]*)"`)
