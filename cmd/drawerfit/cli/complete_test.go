package cli

import (
	"strings"
	"testing"
)

// TestCompletionOfIDsAndFiles: design, build and stock ids come from the
// database with a description; file flags offer files; enumerated flags
// offer their choices.
func TestCompletionOfIDsAndFiles(t *testing.T) {
	t.Parallel()
	if testing.Short() {
		t.Skip("fits and saves a design")
	}
	s := sampleEnv(t)
	design := savedDesign(t, s)
	s.ok("build", design, "--boards", "1")
	lines := func(args ...string) []string {
		t.Helper()
		out := s.ok(append([]string{"__complete"}, args...)...)
		return strings.Split(strings.TrimSpace(out), "\n")
	}
	has := func(what string, got []string, prefix string) {
		t.Helper()
		for _, l := range got {
			if strings.HasPrefix(l, prefix) {
				return
			}
		}
		t.Errorf("%s: no completion starting %q in %q", what, prefix, got)
	}
	for _, cmd := range [][]string{{"show"}, {"report"}, {"yield"}, {"build"}, {"designs", "remove"}} {
		got := lines(append(cmd, "")...)
		has(strings.Join(cmd, " "), got, design+"\t")
		if got[len(got)-1] != ":4" { // no file completion
			t.Errorf("%v: directive %q, want :4", cmd, got[len(got)-1])
		}
	}
	has("build undo", lines("build", "undo", ""), "1\t1 × ")
	// The sample drawer's first row (invented): a 100 Ω resistor.
	has("stock set", lines("stock", "set", ""), "1\t100 Ω")
	// Only the first argument is an id.
	if got := lines("show", design, ""); len(got) != 1 {
		t.Errorf("second argument completes %q", got)
	}
	// File flags: the shell is told the extensions (directive 8 =
	// ShellCompDirectiveFilterFileExt).
	got := lines("fit", "lowpass", "--netlist", "")
	if got[len(got)-1] != ":8" || !strings.Contains(strings.Join(got, " "), "cir") {
		t.Errorf("--netlist completes %q", got)
	}
	has("--response", lines("plan", "lowpass", "--response", ""), "chebyshev")
}
