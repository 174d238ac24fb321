package tolerance

import (
	"strings"
	"testing"
)

// TestTrialsBoundedByMemory: the allowed maximum of trials is refused
// where its figures would pass MaxSimBytes, with the count that fits; a
// usual run is not. (Measured: 10^6 trials of a 4th-order design held a
// peak of 177 MB resident, close to trialBytes(2) = 178 bytes per trial.)
func TestTrialsBoundedByMemory(t *testing.T) {
	t.Parallel()
	if err := fitsMemory(MaxTrials, 2); err == nil || !strings.Contains(err.Error(), "at most") {
		t.Errorf("10^7 trials of 2 sections: %v", err)
	}
	if err := fitsMemory(DefaultTrials*100, 8); err != nil {
		t.Errorf("200,000 trials of 8 sections: %v", err)
	}
	most := MaxSimBytes / trialBytes(3)
	if fitsMemory(most, 3) != nil || fitsMemory(most+1, 3) == nil {
		t.Errorf("the bound is not at %d trials", most)
	}
}
