package cli

import (
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"drawerfit/optimize"
	"drawerfit/production"
	"drawerfit/stock"
	"drawerfit/store"
	"drawerfit/synth"
)

// savedDesignDB makes a stock database from the sample drawer with one
// saved design per list of specifications (several make a board plan
// design) and returns its path and the designs' ids.
func savedDesignDB(t *testing.T, boards int, name string, filters ...[]synth.Spec) (string, []string) {
	t.Helper()
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "stock.db")
	db, err := store.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	fh, err := os.Open(checksStock)
	if err != nil {
		t.Fatal(err)
	}
	in, err := stock.ReadCSV(fh)
	fh.Close()
	if err != nil {
		t.Fatal(err)
	}
	if _, err := db.Import(ctx, in, false); err != nil {
		t.Fatal(err)
	}
	items, err := db.List(ctx, stock.Filter{})
	if err != nil {
		t.Fatal(err)
	}
	opt := optimize.DefaultOptions()
	odd := synth.OddOnePole // the quicker search; the 3-pole one is tested elsewhere
	opt.Combine, opt.Top, opt.Boards, opt.Odd = 1, 1, boards, &odd
	var ds []*production.Design
	for _, specs := range filters {
		d := &production.Design{Name: name, Boards: boards, Rank: 1, Settings: production.SettingsOf(opt)}
		for i, sp := range specs {
			res, err := optimize.Fit(context.Background(), items, sp, opt)
			if err != nil || len(res.Candidates) == 0 {
				t.Fatalf("fit %v: %v", sp, err)
			}
			label := ""
			if len(specs) > 1 {
				label = []string{"left <channel>", "right channel"}[i]
			}
			d.Filters = append(d.Filters, production.Filter{Label: label, Spec: res.Spec, Candidate: res.Candidates[0]})
		}
		ds = append(ds, d)
	}
	if err := db.SaveDesigns(ctx, ds); err != nil {
		t.Fatal(err)
	}
	var ids []string
	for _, d := range ds {
		ids = append(ids, d.ID)
	}
	return path, ids
}

func TestReportSavedDesign(t *testing.T) {
	t.Parallel()
	lp := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 2e3, Stop: 6e3, StopAtten: 25, Order: 3, Odd: synth.OddOnePole}
	hp := synth.Spec{Kind: synth.HighPass, Approx: synth.Bessel, Pass: 100, Order: 2}
	db, ids := savedDesignDB(t, 4, "Tide gauge front end", []synth.Spec{lp}, []synth.Spec{lp, hp})
	dir := t.TempDir()

	t.Run("single filter with checks", func(t *testing.T) {
		out := filepath.Join(dir, "gauge.html")
		pngs := filepath.Join(dir, "png")
		code, stdout, errs := runChecksFit(t, "--db", db, "report", ids[0], "-o", out, "--png", pngs,
			"--yield", "--trials", "200", "--gbw", "1M", "--bias-resistor", "--note", "<script>alert(1)</script> fit C2 last")
		if code != 0 {
			t.Fatalf("exit %d: %s", code, errs)
		}
		if !strings.Contains(stdout, out) || !strings.Contains(stdout, ids[0]) {
			t.Errorf("stdout %q does not name the file and the design", stdout)
		}
		b, err := os.ReadFile(out)
		if err != nil {
			t.Fatal(err)
		}
		html := string(b)
		for _, want := range []string{
			`class="schematic"`, `id="fig-magnitude"`, "Tide gauge front end", "design " + ids[0], "4 boards",
			"simulated boards", "bias-current compensation resistor", "Op-amp check", "With the op-amp model", "&lt;script&gt;alert(1)&lt;/script&gt; fit C2 last",
		} {
			if !strings.Contains(html, want) {
				t.Errorf("the sheet lacks %q", want)
			}
		}
		// The note is shown as text, never as a script; nothing is fetched.
		for _, bad := range []string{"<script", `src="`, `href="http`, "url(", "<link"} {
			if strings.Contains(html, bad) {
				t.Errorf("the sheet contains %q", bad)
			}
		}
		for _, name := range []string{"magnitude.png", "phase.png", "group-delay.png"} {
			if _, err := os.Stat(filepath.Join(pngs, name)); err != nil {
				t.Error(err)
			}
		}
	})

	t.Run("stock changed since saving", func(t *testing.T) {
		// Remove a row the single-filter design uses: its sheet says so.
		var show struct {
			StockUse []struct {
				StockID int64 `json:"stock_id"`
			} `json:"stock_use"`
		}
		code, stdout, errs := runChecksFit(t, "--db", db, "show", ids[0], "--json")
		if code != 0 || json.Unmarshal([]byte(stdout), &show) != nil || len(show.StockUse) == 0 {
			t.Fatalf("show: exit %d %s", code, errs)
		}
		row := strconv.FormatInt(show.StockUse[0].StockID, 10)
		if code, _, errs := runChecksFit(t, "--db", db, "stock", "remove", row, "--force"); code != 0 {
			t.Fatalf("remove: %s", errs)
		}
		out := filepath.Join(dir, "changed.html")
		if code, _, errs := runChecksFit(t, "--db", db, "report", ids[0], "-o", out); code != 0 {
			t.Fatalf("exit %d: %s", code, errs)
		}
		b, _ := os.ReadFile(out)
		if !strings.Contains(string(b), "stock: row "+row) {
			t.Errorf("the sheet does not say that row %s is gone", row)
		}
	})

	t.Run("board plan, one board sheet", func(t *testing.T) {
		out := filepath.Join(dir, "whole.html")
		code, _, errs := runChecksFit(t, "--db", db, "report", ids[1], "-o", out)
		if code != 0 {
			t.Fatalf("exit %d: %s", code, errs)
		}
		b, err := os.ReadFile(out)
		if err != nil {
			t.Fatal(err)
		}
		page := string(b)
		for _, want := range []string{`id="board-picks"`, "left &lt;channel&gt;", "right channel", `id="filter-1"`, `id="filter-2"`, "F2."} {
			if !strings.Contains(page, want) {
				t.Errorf("board sheet lacks %q", want)
			}
		}
		if strings.Count(page, "<html") != 1 {
			t.Error("the board sheet is not one document")
		}
	})

	t.Run("board plan, one sheet per filter", func(t *testing.T) {
		out := filepath.Join(dir, "board.html")
		code, _, errs := runChecksFit(t, "--db", db, "report", ids[1], "-o", out, "--split")
		if code != 0 {
			t.Fatalf("exit %d: %s", code, errs)
		}
		for i, want := range []string{"left &lt;channel&gt;", "right channel"} {
			b, err := os.ReadFile(filepath.Join(dir, "board-"+string(rune('1'+i))+".html"))
			if err != nil {
				t.Fatal(err)
			}
			if !strings.Contains(string(b), want) {
				t.Errorf("sheet %d lacks its label %q", i+1, want)
			}
		}
		if _, err := os.Stat(out); err == nil {
			t.Errorf("%s written besides the per-filter sheets", out)
		}
		out = filepath.Join(dir, "right.html")
		if code, _, errs := runChecksFit(t, "--db", db, "report", ids[1], "-o", out, "--filter", "Right Channel"); code != 0 {
			t.Fatalf("--filter by label: exit %d: %s", code, errs)
		}
		b, err := os.ReadFile(out)
		if err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(string(b), "high-pass") {
			t.Error("--filter picked the wrong filter")
		}
	})

	t.Run("errors", func(t *testing.T) {
		out := filepath.Join(dir, "x.html")
		cases := []struct {
			name string
			args []string
			code int
		}{
			{"unknown design", []string{"report", "zzzz9", "-o", out}, 1},
			{"no output", []string{"report", ids[0]}, 2},
			{"no id", []string{"report", "-o", out}, 2},
			{"filter out of range", []string{"report", ids[1], "-o", out, "--filter", "3"}, 2},
			{"unknown label", []string{"report", ids[1], "-o", out, "--filter", "middle"}, 1},
			{"zero gbw", []string{"report", ids[0], "-o", out, "--gbw", "0"}, 2},
			{"zero trials", []string{"report", ids[0], "-o", out, "--yield", "--trials", "0"}, 2},
		}
		for _, tc := range cases {
			t.Run(tc.name, func(t *testing.T) {
				code, _, errs := runChecksFit(t, append([]string{"--db", db}, tc.args...)...)
				if code != tc.code {
					t.Errorf("exit %d, want %d: %s", code, tc.code, errs)
				}
			})
		}
		if _, err := os.Stat(out); err == nil {
			t.Error("a failed report left a file")
		}
	})
}
