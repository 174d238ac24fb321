package tolerance

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"drawerfit/internal/testkit"
)

func TestForecastBoardsTendsToBinomial(t *testing.T) {
	t.Parallel()
	// With a very large number of trials the yield is known and the batch
	// count is binomial: the forecast's 2.5 % and 97.5 % points must be those
	// of gonum's binomial distribution (an independent implementation).
	for _, tc := range []struct {
		p     float64
		built int
	}{{0.9, 25}, {0.5, 25}, {0.97, 100}, {0.3, 7}} {
		trials := 100_000_000
		passed := int(math.Round(tc.p * float64(trials)))
		got, err := ForecastBoards(passed, trials, tc.built)
		if err != nil {
			t.Fatal(err)
		}
		bin := distuv.Binomial{N: float64(tc.built), P: tc.p}
		lo, hi := -1, tc.built
		for x := 0; x <= tc.built; x++ {
			c := bin.CDF(float64(x))
			if lo < 0 && c > 0.025 {
				lo = x
			}
			if c >= 0.975 {
				hi = x
				break
			}
		}
		if got.Low != lo || got.High != hi || !testkit.Abs(1e-6).Equal(got.Expected, tc.p*float64(tc.built)) {
			t.Errorf("p %.2f, %d boards: forecast %+v, binomial %d..%d, mean %.2f", tc.p, tc.built, got, lo, hi, tc.p*float64(tc.built))
		}
	}
}

func TestForecastBoardsWidensWithFewTrials(t *testing.T) {
	t.Parallel()
	// Fewer trials, same observed yield: the forecast can only widen.
	many, _ := ForecastBoards(9000, 10000, 25)
	few, _ := ForecastBoards(90, 100, 25)
	if few.Low > many.Low || few.High < many.High {
		t.Errorf("100 trials %+v narrower than 10000 trials %+v", few, many)
	}
	if _, err := ForecastBoards(5, 4, 25); err == nil {
		t.Error("5 of 4 trials accepted")
	}
	all, _ := ForecastBoards(2000, 2000, 25)
	if all.High != 25 || all.Low < 23 {
		t.Errorf("all trials passed: %+v", all)
	}
}
