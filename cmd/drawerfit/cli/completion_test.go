package cli

import (
	"bytes"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

func runCompletionCmd(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	env := &Env{In: strings.NewReader(""), Out: &out, Err: &errb,
		DBPath: filepath.Join(t.TempDir(), "stock.db"),
		Getenv: func(string) string { return "" }}
	code := Run(env, args)
	return code, out.String(), errb.String()
}

func TestCompletionScripts(t *testing.T) {
	t.Parallel()
	// Each shell's script defines its entry point under the program's name
	// (the forms cobra documents for its generators).
	cases := []struct {
		shell string
		want  []string
	}{
		{"bash", []string{"__start_drawerfit", "complete -o default -F __start_drawerfit drawerfit"}},
		{"zsh", []string{"#compdef drawerfit", "compdef _drawerfit drawerfit"}},
		{"fish", []string{"complete -c drawerfit", "__drawerfit_perform_completion"}},
	}
	for _, c := range cases {
		t.Run(c.shell, func(t *testing.T) {
			code, out, errs := runCompletionCmd(t, "completion", c.shell)
			if code != 0 {
				t.Fatalf("exit %d: %s", code, errs)
			}
			for _, w := range c.want {
				if !strings.Contains(out, w) {
					t.Errorf("%s script lacks %q", c.shell, w)
				}
			}
		})
	}
}

// TestCompletionBashRuns loads the bash script into bash (when bash is
// installed) and asks it to complete "drawerfit comp": the script calls
// back into the binary's hidden __complete command, for which a stub on
// PATH replays the real in-process answer.
func TestCompletionBashRuns(t *testing.T) {
	t.Parallel()
	bash, err := exec.LookPath("bash")
	if err != nil {
		t.Skip("bash not installed")
	}
	code, script, _ := runCompletionCmd(t, "completion", "bash")
	if code != 0 {
		t.Fatal("no script")
	}
	// The hidden __complete command answers what the shell asks.
	code, answer, errs := runCompletionCmd(t, "__complete", "comp")
	if code != 0 {
		t.Fatalf("__complete exit %d: %s", code, errs)
	}
	if !strings.Contains(answer, "completion") {
		t.Fatalf("__complete comp answered %q", answer)
	}
	dir := t.TempDir()
	// A stand-in drawerfit on PATH that replays the in-process answer.
	stub := "#!/bin/sh\ncat <<'EOF'\n" + answer + "EOF\n"
	if err := os.WriteFile(filepath.Join(dir, "drawerfit"), []byte(stub), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "c.bash"), []byte(script), 0o644); err != nil {
		t.Fatal(err)
	}
	// The script relies on the bash-completion package for word splitting;
	// a minimal stand-in for its _get_comp_words_by_ref keeps the test free
	// of that package.
	prog := `_get_comp_words_by_ref() { cur=${COMP_WORDS[COMP_CWORD]}; prev=${COMP_WORDS[COMP_CWORD-1]}; words=("${COMP_WORDS[@]}"); cword=$COMP_CWORD; }
source c.bash
COMP_WORDS=(drawerfit comp); COMP_CWORD=1; COMP_LINE="drawerfit comp"; COMP_POINT=${#COMP_LINE}
__start_drawerfit drawerfit comp drawerfit
printf '%s\n' "${COMPREPLY[@]}"`
	cmd := exec.Command(bash, "--norc", "--noprofile", "-c", prog)
	cmd.Dir = dir
	cmd.Env = append(os.Environ(), "PATH="+dir+":"+os.Getenv("PATH"))
	// Outside a real completion, bash's compopt complains on stderr; only
	// the completions on stdout matter.
	var errb bytes.Buffer
	cmd.Stderr = &errb
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("bash: %v\n%s", err, errb.String())
	}
	if strings.TrimSpace(string(out)) != "completion" {
		t.Errorf("bash completed %q, want completion", out)
	}
}

func TestCompletionBadShell(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name string
		args []string
	}{
		{"unknown shell", []string{"completion", "tcsh"}},
		{"no shell", []string{"completion"}},
		{"two shells", []string{"completion", "bash", "zsh"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			code, _, errs := runCompletionCmd(t, c.args...)
			if code != 2 {
				t.Errorf("exit %d, want 2 (%s)", code, errs)
			}
		})
	}
}

func TestCompletionHelp(t *testing.T) {
	t.Parallel()
	code, out, _ := runCompletionCmd(t, "completion", "--help")
	if code != 0 || !strings.Contains(out, "source <(drawerfit completion bash)") {
		t.Errorf("exit %d, help %q", code, out)
	}
}
