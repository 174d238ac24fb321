package store

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"drawerfit/production"
	"drawerfit/stock"
)

const buildHelperEnv = "DRAWERFIT_BUILD_HELPER"

// TestBuildHelperProcess is not a test: started by TestConcurrentBuilds,
// it builds boards of a saved design once its standard input closes, and
// exits 0 when the parts were drawn, 6 when the build was refused for a
// shortfall (printing the short rows), other codes on errors.
func TestBuildHelperProcess(t *testing.T) {
	t.Parallel()
	if os.Getenv(buildHelperEnv) == "" {
		return
	}
	path, id := os.Getenv("DRAWERFIT_BUILD_DB"), os.Getenv("DRAWERFIT_BUILD_DESIGN")
	boards, _ := strconv.Atoi(os.Getenv("DRAWERFIT_BUILD_BOARDS"))
	ctx := context.Background()
	db, err := Open(path)
	if err != nil {
		fmt.Fprintln(os.Stderr, "helper:", err)
		os.Exit(3)
	}
	d, err := db.Design(ctx, id)
	if err != nil {
		fmt.Fprintln(os.Stderr, "helper:", err)
		os.Exit(3)
	}
	batch, err := production.NewBatch(d, boards)
	if err != nil {
		os.Exit(3)
	}
	// Both children wait here until the parent releases them together.
	io.Copy(io.Discard, os.Stdin)
	res, err := production.BuildBatch(ctx, db, batch)
	db.Close()
	var sf *stock.Shortfall
	switch {
	case err == nil:
		fmt.Printf("built %d\n", res.Build.ID)
		os.Exit(0)
	case errors.As(err, &sf):
		for _, r := range sf.Rows {
			fmt.Printf("short %d %d %d\n", r.StockID, r.Needed, r.OnHand)
		}
		os.Exit(6)
	}
	fmt.Fprintln(os.Stderr, "helper:", err)
	os.Exit(4)
}

// TestConcurrentBuilds starts two processes that build 30 boards each of
// one design at the same moment, on a stock of 40 boards' worth: exactly
// one build must succeed, the other must be refused with the shortfall
// of every row, and no quantity may go below zero.
func TestConcurrentBuilds(t *testing.T) {
	t.Parallel()
	if testing.Short() {
		t.Skip("starts two subprocesses")
	}
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "stock.db")
	db, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	d := fixtureDesign(t, db, 1)
	// Every row holds 40 boards' worth.
	for _, u := range d.StockUse() {
		if _, err := db.SetQuantity(ctx, u.StockID, 40*u.PerBoard, "count"); err != nil {
			t.Fatal(err)
		}
	}
	if err := db.SaveDesigns(ctx, []*production.Design{d}); err != nil {
		t.Fatal(err)
	}
	before := quantities(t, db)
	db.Close()

	const boards = 30
	var cmds []*exec.Cmd
	var outs []*strings.Builder
	var gates []io.WriteCloser
	for i := 0; i < 2; i++ {
		cmd := exec.Command(os.Args[0], "-test.run=^TestBuildHelperProcess$", "-test.v=false")
		cmd.Env = append(os.Environ(), buildHelperEnv+"=1", "DRAWERFIT_BUILD_DB="+path,
			"DRAWERFIT_BUILD_DESIGN="+d.ID, "DRAWERFIT_BUILD_BOARDS="+strconv.Itoa(boards))
		out := &strings.Builder{}
		cmd.Stdout, cmd.Stderr = out, os.Stderr
		in, _ := cmd.StdinPipe()
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		cmds, outs, gates = append(cmds, cmd), append(outs, out), append(gates, in)
	}
	for _, g := range gates {
		g.Close()
	}
	codes := map[int]int{}
	var refused string
	for i, cmd := range cmds {
		err := cmd.Wait()
		code := 0
		var ee *exec.ExitError
		if errors.As(err, &ee) {
			code = ee.ExitCode()
		} else if err != nil {
			t.Fatal(err)
		}
		codes[code]++
		if code == 6 {
			refused = outs[i].String()
		}
	}
	if codes[0] != 1 || codes[6] != 1 {
		t.Fatalf("exit codes %v: want one build and one refusal\n%s%s", codes, outs[0], outs[1])
	}

	db, err = Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	after := quantities(t, db)
	// The refusal names every row: each had qty - 30·use left, below 30·use.
	lines := strings.Split(strings.TrimSpace(refused), "\n")
	if len(lines) != len(d.StockUse()) {
		t.Fatalf("refusal lists %d rows, the design uses %d:\n%s", len(lines), len(d.StockUse()), refused)
	}
	for _, u := range d.StockUse() {
		want := before[u.StockID] - boards*u.PerBoard
		if after[u.StockID] != want || want < 0 {
			t.Errorf("row %d: %d after, want %d", u.StockID, after[u.StockID], want)
		}
		line := fmt.Sprintf("short %d %d %d", u.StockID, boards*u.PerBoard, want)
		if !strings.Contains(refused, line) {
			t.Errorf("refusal lacks %q:\n%s", line, refused)
		}
	}
	h, _ := db.History(ctx, 0)
	for _, m := range h {
		if m.Balance < 0 {
			t.Fatalf("ledger entry %d has balance %d", m.ID, m.Balance)
		}
	}
	if bs, _ := db.Builds(ctx); len(bs) != 1 {
		t.Fatalf("%d builds recorded, want 1", len(bs))
	}
}
