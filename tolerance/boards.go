package tolerance

import (
	"math"

	"drawerfit/fault"
)

// Boards is the forecast for a batch of boards.
type Boards struct {
	// Built is the number of boards in the batch.
	Built int `json:"built"`
	// Expected is the expected number that pass.
	Expected float64 `json:"expected"`
	// Low and High bound the number that pass with 95 % probability
	// (2.5 % below Low, 2.5 % above High).
	Low  int `json:"low"`
	High int `json:"high"`
}

// ForecastBoards predicts how many of built boards pass, given passed out
// of trials simulated boards. The forecast includes both the batch's own
// chance variation and the uncertainty of the estimated yield: it is the
// beta-binomial predictive distribution with the Jeffreys prior Beta(½, ½)
// on the yield (posterior Beta(passed+½, trials-passed+½); A. Gelman et al.,
// Bayesian Data Analysis, on the beta-binomial predictive). Errors:
// fault.Invalid for built < 1 or an inconsistent count.
func ForecastBoards(passed, trials, built int) (Boards, error) {
	if built < 1 || built > 1_000_000 {
		return Boards{}, fault.Invalidf("the number of boards must be between 1 and 1000000, got %d", built)
	}
	if trials < 1 || passed < 0 || passed > trials {
		return Boards{}, fault.Invalidf("cannot forecast from %d passing of %d trials", passed, trials)
	}
	a := float64(passed) + 0.5
	b := float64(trials-passed) + 0.5
	lbeta := func(x, y float64) float64 {
		lx, _ := math.Lgamma(x)
		ly, _ := math.Lgamma(y)
		lxy, _ := math.Lgamma(x + y)
		return lx + ly - lxy
	}
	lchoose := func(n, k int) float64 {
		ln, _ := math.Lgamma(float64(n + 1))
		lk, _ := math.Lgamma(float64(k + 1))
		lnk, _ := math.Lgamma(float64(n - k + 1))
		return ln - lk - lnk
	}
	out := Boards{Built: built, Expected: float64(built) * a / (a + b), Low: -1, High: built}
	base := lbeta(a, b)
	cdf := 0.0
	for x := 0; x <= built; x++ {
		cdf += math.Exp(lchoose(built, x) + lbeta(float64(x)+a, float64(built-x)+b) - base)
		if out.Low < 0 && cdf > 0.025 {
			out.Low = x
		}
		if cdf >= 0.975 {
			out.High = x
			break
		}
	}
	if out.Low < 0 {
		out.Low = built
	}
	return out, nil
}
