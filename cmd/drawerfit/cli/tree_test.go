package cli

import (
	"bytes"
	"slices"
	"strings"
	"testing"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"drawerfit/fault"
	"drawerfit/production"
)

// parseOnly runs cmd on args with its run function replaced (the caller
// passed a recording runF to the constructor) and fails on a parse error.
func parseOnly(t *testing.T, cmd *cobra.Command, args ...string) {
	t.Helper()
	var out, errb bytes.Buffer
	cmd.SetOut(&out)
	cmd.SetErr(&errb)
	cmd.SetArgs(args)
	if err := cmd.Execute(); err != nil {
		t.Fatalf("%v: %v (%s)", args, err, errb.String())
	}
}

func testEnv() *Env {
	var in, out, errb bytes.Buffer
	return &Env{In: &in, Out: &out, Err: &errb, Getenv: func(string) string { return "" }}
}

// TestFitFlagsParsed checks the options fit's flags produce, without
// fitting anything.
func TestFitFlagsParsed(t *testing.T) {
	t.Parallel()
	var got *fitOptions
	cmd := NewCmdFit(testEnv(), func(o *fitOptions) error { got = o; return nil })
	parseOnly(t, cmd, "highpass", "--pass", "20", "--order", "4", "--response", "Bessel",
		"--combine", "1", "--rank", "UNIQUE", "--boards", "25", "--odd", "3-pole", "--placement", "edge")
	if got == nil {
		t.Fatal("the run function was not called")
	}
	if got.spec.kind != "highpass" || got.spec.pass != "20" || got.spec.order != 4 || !got.spec.orderSet {
		t.Errorf("spec options %+v", got.spec)
	}
	// Enumerated values are stored in their canonical spelling.
	if got.spec.response != "bessel" || got.rank != "unique" || got.spec.odd != "3pole" || got.spec.placement != "edge" {
		t.Errorf("enumerated options: response %q rank %q odd %q placement %q", got.spec.response, got.rank, got.spec.odd, got.spec.placement)
	}
	if got.combine != 1 || got.boards != 25 || !got.boardsSet {
		t.Errorf("combine %d boards %d (set %v)", got.combine, got.boards, got.boardsSet)
	}
	// Defaults.
	var def *fitOptions
	parseOnly(t, NewCmdFit(testEnv(), func(o *fitOptions) error { def = o; return nil }), "lowpass", "--pass", "1k", "--order", "2")
	if def.rank != "yield" || def.spec.response != "butterworth" || def.spec.placement != "inside" || def.combine != 2 || def.boardsSet {
		t.Errorf("defaults: rank %q response %q placement %q combine %d boardsSet %v", def.rank, def.spec.response, def.spec.placement, def.combine, def.boardsSet)
	}
}

func TestPlanAndYieldFlagsParsed(t *testing.T) {
	t.Parallel()
	var p *planOptions
	parseOnly(t, NewCmdPlan(testEnv(), func(o *planOptions) error { p = o; return nil }),
		"lowpass", "--pass", "1k", "--stop", "3k", "--atten", "40", "--response", "chebyshev", "--ripple", "0.5", "--bessel-norm", "delay")
	if p.kind != "lowpass" || p.stop != "3k" || p.atten != 40 || !p.attenSet || p.response != "chebyshev" || p.ripple != 0.5 || p.besselNorm != "delay" || !p.besselNormSet {
		t.Errorf("plan options %+v", p)
	}
	var y *yieldOptions
	parseOnly(t, NewCmdYield(testEnv(), func(o *yieldOptions) error { y = o; return nil }),
		"abc234/2", "--trials", "500", "--dist", "Normal", "--seed", "7", "--dc-gain", "90")
	if y.id != "abc234/2" || y.trials != 500 || y.dist != "normal" || y.seed != 7 || !y.dcGainSet {
		t.Errorf("yield options %+v", y)
	}
}

func TestReportAndBuildFlagsParsed(t *testing.T) {
	t.Parallel()
	var r *reportOptions
	parseOnly(t, NewCmdReport(testEnv(), func(o *reportOptions) error { r = o; return nil }),
		"abc234", "-o", "-", "--title", "Bench sheet", "--note", "one", "--note", "two")
	if r.id != "abc234" || r.output != "-" || r.title != "Bench sheet" || !slices.Equal(r.notes, []string{"one", "two"}) {
		t.Errorf("report options %+v", r)
	}
	var b *buildOptions
	parseOnly(t, NewCmdBuild(testEnv(), func(o *buildOptions) error { b = o; return nil }),
		"abc234", "--boards", "12", "--dry-run", "--csv", "-")
	if b.id != "abc234" || b.boards != 12 || !b.dryRun || b.csv != "-" {
		t.Errorf("build options %+v", b)
	}
}

// TestEnumFlagsAgree walks the whole command tree: every enumerated flag's
// help text, completion and check come from its one list of choices.
func TestEnumFlagsAgree(t *testing.T) {
	t.Parallel()
	root := NewRoot(testEnv())
	seen := 0
	var walk func(c *cobra.Command)
	walk = func(c *cobra.Command) {
		c.LocalNonPersistentFlags().VisitAll(func(fl *pflag.Flag) {
			e, ok := fl.Value.(*enumValue)
			if !ok {
				return
			}
			seen++
			name := c.CommandPath() + " --" + fl.Name
			var names []string
			for _, ch := range e.choices {
				names = append(names, ch.name)
				if !strings.Contains(fl.Usage, ch.name) {
					t.Errorf("%s: help %q does not name %q", name, fl.Usage, ch.name)
				}
			}
			comp, ok := c.GetFlagCompletionFunc(fl.Name)
			if !ok {
				t.Errorf("%s: no completion", name)
			} else {
				vals, _ := comp(c, nil, "")
				for i := range vals {
					vals[i], _, _ = strings.Cut(vals[i], "\t")
				}
				if !slices.Equal(vals, names) {
					t.Errorf("%s: completes %v, choices %v", name, vals, names)
				}
			}
			if !slices.Contains(names, fl.DefValue) {
				t.Errorf("%s: default %q is not a choice", name, fl.DefValue)
			}
			probe := &enumValue{p: new(string), what: e.what, choices: e.choices, aliases: e.aliases}
			for _, n := range names {
				if err := probe.Set(strings.ToUpper(n)); err != nil || *probe.p != n {
					t.Errorf("%s: %q refused or stored as %q: %v", name, strings.ToUpper(n), *probe.p, err)
				}
			}
			if err := probe.Set("no-such-choice"); err == nil || !strings.Contains(err.Error(), e.names()) {
				t.Errorf("%s: a wrong value gives %v, want the list of choices", name, err)
			}
		})
		for _, sub := range c.Commands() {
			walk(sub)
		}
	}
	walk(root)
	// --rank, --response, --odd, --bessel-norm, --placement on fit and plan
	// (minus --rank), --dist on fit, yield and report.
	if seen < 10 {
		t.Errorf("only %d enumerated flags in the tree", seen)
	}
}

func TestVersionFlag(t *testing.T) {
	t.Parallel()
	var out, errb bytes.Buffer
	env := &Env{In: &bytes.Buffer{}, Out: &out, Err: &errb}
	if code := Run(env, []string{"--version"}); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	want := "drawerfit " + versionString() + "\n"
	if out.String() != want {
		t.Errorf("--version printed %q, want %q", out.String(), want)
	}
	out.Reset()
	if code := Run(env, []string{"version"}); code != 0 || out.String() != want {
		t.Errorf("version printed %q (exit %d), want %q", out.String(), code, want)
	}
}

// TestDomainFieldMappedToFlag: a domain error names its field; the CLI
// leads the message with the field's flag.
func TestDomainFieldMappedToFlag(t *testing.T) {
	t.Parallel()
	_, err := production.NewBatch(&production.Design{}, 0)
	if fault.FieldOf(err) != "Boards" || strings.Contains(err.Error(), "--") {
		t.Fatalf("domain error %q (field %q): want field Boards and no flag text", err, fault.FieldOf(err))
	}
	if got := withFlag(err); !strings.HasPrefix(got, "--boards: ") {
		t.Errorf("CLI message %q, want it led by --boards", got)
	}
	if got := withFlag(fault.Invalidf("plain")); got != "plain" {
		t.Errorf("an error without a field became %q", got)
	}
}
