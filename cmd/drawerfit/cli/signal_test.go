package cli

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// interruptLimit is how soon a command must stop after the first signal
// (the project's requirement for Ctrl-C).
const interruptLimit = 500 * time.Millisecond

func TestSignalCancelsThenSecondExits(t *testing.T) {
	var errb bytes.Buffer
	exited := make(chan int, 1)
	// SIGUSR1 stands in for SIGINT so that the test process keeps its own
	// interrupt handling.
	ctx, stop := notifyContext(&errb, func(code int) { exited <- code }, syscall.SIGUSR1)
	defer stop()
	if err := syscall.Kill(os.Getpid(), syscall.SIGUSR1); err != nil {
		t.Fatal(err)
	}
	select {
	case <-ctx.Done():
	case <-time.After(interruptLimit):
		t.Fatal("the first signal did not cancel the context")
	}
	if got := context.Cause(ctx).Error(); !strings.Contains(got, "interrupted by") {
		t.Errorf("cause = %q", got)
	}
	select {
	case code := <-exited:
		t.Fatalf("exited with %d after the first signal", code)
	default:
	}
	if err := syscall.Kill(os.Getpid(), syscall.SIGUSR1); err != nil {
		t.Fatal(err)
	}
	select {
	case code := <-exited:
		if code != exitInterrupted {
			t.Errorf("second signal: exit %d, want %d", code, exitInterrupted)
		}
	case <-time.After(interruptLimit):
		t.Fatal("the second signal did not end the process")
	}
}

// bigStockCSV writes an invented stock large enough that an 8th-order fit
// with pairs runs for seconds: E96 resistors (IEC 60063) over three
// decades and E24 capacitors over three.
func bigStockCSV(t *testing.T, dir string) string {
	var b strings.Builder
	b.WriteString("kind,value,tolerance,quantity,package,dielectric,location,note\n")
	for dec := 3; dec <= 5; dec++ {
		for i := 0; i < 96; i++ {
			v := math.Round(100*math.Pow(10, float64(i)/96)) / 100 * math.Pow(10, float64(dec))
			fmt.Fprintf(&b, "resistor,%g,1%%,20,0603,,R%d,\n", v, dec)
		}
	}
	for dec := -9; dec <= -7; dec++ {
		for i := 0; i < 24; i++ {
			v := math.Round(10*math.Pow(10, float64(i)/24)) / 10 * math.Pow(10, float64(dec))
			fmt.Fprintf(&b, "capacitor,%gF,5%%,20,0805,C0G,C%d,\n", v, -dec)
		}
	}
	p := filepath.Join(dir, "big.csv")
	if err := os.WriteFile(p, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func TestInterruptedFitExits130AndWritesNothing(t *testing.T) {
	dir := t.TempDir()
	csv := bigStockCSV(t, dir)
	report := filepath.Join(dir, "sheet.html")
	netlist := filepath.Join(dir, "f.cir")
	ctx, cancel := context.WithCancelCause(context.Background())
	var out, errb bytes.Buffer
	env := &Env{In: strings.NewReader(""), Out: &out, Err: &errb, Getenv: func(string) string { return "" }, Ctx: ctx}
	var cancelled time.Time
	timer := time.AfterFunc(300*time.Millisecond, func() {
		cancelled = time.Now()
		cancel(interruption{os.Interrupt})
	})
	defer timer.Stop()
	code := Run(env, []string{"--db", filepath.Join(dir, "stock.db"), "fit", "lowpass", "--pass", "1k", "--order", "10",
		"--stock", csv, "--suggest", "--report", report, "--netlist", netlist})
	took := time.Since(cancelled)
	if cancelled.IsZero() {
		t.Skip("the fit finished before the interrupt; nothing to test on this machine")
	}
	if code != exitInterrupted {
		t.Fatalf("exit %d, want %d\n%s", code, exitInterrupted, errb.String())
	}
	if took > interruptLimit {
		t.Errorf("stopped %v after the interrupt, want within %v", took, interruptLimit)
	}
	if !strings.Contains(errb.String(), "fit interrupted by SIGINT") || !strings.Contains(errb.String(), "nothing was saved or written") {
		t.Errorf("stderr = %q", errb.String())
	}
	if out.Len() != 0 {
		t.Errorf("stdout after an interrupt: %q", out.String())
	}
	for _, p := range []string{report, netlist} {
		if _, err := os.Stat(p); err == nil {
			t.Errorf("%s was written", filepath.Base(p))
		}
	}
}
