package respplot

import "testing"

func TestScratchDump(t *testing.T) {
	r := lowpassResponse()
	f := LogGrid(100, 9000, 60)
	nom, _, _ := Sample(r.Nominal, f)
	b := Band{Label: "5th–95th percentile", Freq: f, Lo: make([]float64, len(f)), Hi: make([]float64, len(f))}
	for i := range f {
		b.Lo[i], b.Hi[i] = nom[i]-1.5, nom[i]+1.5
	}
	r.Bands = []Band{b}
	figs, _ := Figures(r)
	WritePNGs("/tmp/rp", "", figs)
	r2 := &Response{Kind: 1, Target: butterworth(3, 300, true), Nominal: butterworth(3, 290, true), Limits: Limits{Fp: 300, Ap: 3.0103, Fs: 100, As: 25}}
	figs, _ = Figures(r2)
	WritePNGs("/tmp/rp", "hp", figs)
}
