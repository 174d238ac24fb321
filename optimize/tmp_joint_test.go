package optimize

import (
	"os"
	"testing"
	"time"

	"drawerfit/synth"
)

func TestTmpJoint(t *testing.T) {
	if os.Getenv("TMPPROF") == "" {
		t.Skip()
	}
	items := sampleStock(t)
	o := DefaultOptions()
	rows, _, _ := usableRows(items, o)
	res, _ := buildValues(rows, synth.Resistor, 2, 1, o.RMin, o.RMax)
	caps, _ := buildValues(rows, synth.Capacitor, 2, 1, o.CMin, o.CMax)
	for _, n := range []int{2, 3, 4} {
		spec := synth.Spec{Kind: synth.LowPass, Approx: synth.Butterworth, Pass: 1000, Order: n}
		spec.Normalize()
		d, _ := synth.NewDesign(spec, n, synth.OddOnePole)
		g := gridFor(spec)
		var ts []*target
		for i := range d.Sections {
			tg := newTarget(&d.Sections[i], &g)
			tg.setDomain(res, caps)
			ts = append(ts, tg)
		}
		for _, lw := range []float64{1} {
		leafWidth = lw
		for _, B := range []float64{0.05, 0.5} {
			t0 := time.Now()
			regs, ok := jointRegions(ts, B, ts[0].coarse(), func() bool { return false })
			t.Logf("n %d B %g lw %g ok %v %v", n, B, lw, ok, time.Since(t0))
			for _, r := range regs {
				t.Logf("   box x [%.4f %.4f] y [%.4f %.4f]", r.box.xlo, r.box.xhi, r.box.ylo, r.box.yhi)
			}
		}
		}
	}
}
