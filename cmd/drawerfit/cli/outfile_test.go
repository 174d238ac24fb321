package cli

import (
	"io"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

const backupCSV = "kind,value,quantity\nR,4k7,10\nR,10k,20\n"

// TestExportKeepsABackup: an export over an existing file needs --force;
// an export of an empty stock needs --allow-empty; neither refusal
// touches the file.
func TestExportKeepsABackup(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t).createEmpty()
	backup := s.write("backup.csv", backupCSV)
	for _, args := range [][]string{
		{"stock", "export", backup},                  // exists, no --force
		{"stock", "export", backup, "--force"},       // empty stock
		{"stock", "export", "--allow-empty", backup}, // exists
	} {
		_, errs, code := s.run("", args...)
		if code != 1 || !strings.Contains(errs, "nothing was written") {
			t.Errorf("%v: exit %d, stderr %q", args, code, errs)
		}
		if b, _ := os.ReadFile(backup); string(b) != backupCSV {
			t.Fatalf("%v changed the backup: %q", args, b)
		}
	}
	fresh := filepath.Join(s.dir, "fresh.csv")
	if _, _, code := s.run("", "stock", "export", fresh); code != 1 {
		t.Errorf("empty export to a new file: exit %d", code)
	}
	if _, err := os.Stat(fresh); err == nil {
		t.Error("the refused empty export made a file")
	}
	if out, _, code := s.run("", "stock", "export"); code != 1 || out != "" {
		t.Errorf("empty export to standard output: exit %d, %q", code, out)
	}
	if _, _, code := s.run("", "stock", "export", fresh, "--allow-empty"); code != 0 {
		t.Errorf("--allow-empty: exit %d", code)
	}
	// With rows and --force the file is replaced and keeps its mode.
	s.ok("stock", "import", backup)
	if err := os.Chmod(backup, 0o600); err != nil {
		t.Fatal(err)
	}
	s.ok("stock", "export", backup, "--force")
	fi, err := os.Stat(backup)
	if err != nil || fi.Mode().Perm() != 0o600 {
		t.Errorf("mode after --force: %v %v", fi.Mode(), err)
	}
	if out := s.ok("stock", "export", "-"); !strings.Contains(out, "10k") {
		t.Errorf("export -: %q", out)
	}
}

// TestOutputFileKinds: links are followed, pipes and devices written
// through, never replaced by a regular file; a missing folder is a plain
// message.
func TestOutputFileKinds(t *testing.T) {
	t.Parallel()
	s := newStockEnv(t)
	s.ok("stock", "import", s.write("drawer.csv", backupCSV))
	dir := s.dir

	target := filepath.Join(dir, "target.csv")
	link := filepath.Join(dir, "link.csv")
	os.Symlink("target.csv", link)
	s.ok("stock", "export", link) // dangling: creates the target
	if fi, err := os.Lstat(link); err != nil || fi.Mode()&os.ModeSymlink == 0 {
		t.Errorf("the link was replaced: %v %v", fi.Mode(), err)
	}
	if b, _ := os.ReadFile(target); !strings.Contains(string(b), "10k") {
		t.Errorf("target: %q", b)
	}
	if _, errs, code := s.run("", "stock", "export", link); code != 1 || !strings.Contains(errs, "target of the link") {
		t.Errorf("link to an existing file without --force: exit %d %q", code, errs)
	}
	s.ok("stock", "export", link, "--force")
	if fi, _ := os.Lstat(link); fi.Mode()&os.ModeSymlink == 0 {
		t.Error("--force replaced the link")
	}

	fifo := filepath.Join(dir, "pipe")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Fatal(err)
	}
	got := make(chan string)
	go func() {
		f, err := os.Open(fifo)
		if err != nil {
			got <- err.Error()
			return
		}
		b, _ := io.ReadAll(f)
		f.Close()
		got <- string(b)
	}()
	s.ok("stock", "export", fifo)
	if b := <-got; !strings.Contains(b, "10k") {
		t.Errorf("read from the pipe: %q", b)
	}
	if fi, _ := os.Lstat(fifo); fi.Mode()&os.ModeNamedPipe == 0 {
		t.Errorf("the pipe became %v", fi.Mode())
	}

	if os.Geteuid() == 0 {
		// A null device node of our own (Linux: character major 1,
		// minor 3, devices.txt), so that a mistake cannot touch /dev.
		null := filepath.Join(dir, "null")
		if err := syscall.Mknod(null, syscall.S_IFCHR|0o666, 1<<8|3); err != nil {
			t.Fatal(err)
		}
		s.ok("stock", "export", null)
		if fi, _ := os.Lstat(null); fi.Mode()&os.ModeCharDevice == 0 {
			t.Errorf("the device became %v", fi.Mode())
		}
	}

	_, errs, code := s.run("", "stock", "export", filepath.Join(dir, "no", "such", "x.csv"))
	if code != 1 || !strings.Contains(errs, "does not exist") {
		t.Errorf("missing folder: exit %d %q", code, errs)
	}
	_, errs, code = s.run("", "stock", "export", dir)
	if code != 2 || !strings.Contains(errs, "is a folder") {
		t.Errorf("a folder: exit %d %q", code, errs)
	}
}

// TestDashIsStandardOutput: "-" writes the file to standard output, and
// the command's other lines then go to standard error.
func TestDashIsStandardOutput(t *testing.T) {
	t.Parallel()
	s := sampleEnv(t)
	out, _, code := s.run("", "plan", "lowpass", "--pass", "1k", "--order", "2", "--netlist", "-", "--json")
	if code != 0 || !strings.Contains(out, ".end") {
		t.Errorf("plan --netlist -: exit %d\n%s", code, out)
	}
	var fit map[string]any
	s.jsonOf(&fit, "fit", "lowpass", "--pass", "2k", "--order", "2", "--combine", "1", "--top", "1", "--save", "--json")
	id := fit["candidates"].([]any)[0].(map[string]any)["design_id"].(string)
	out, errs, code := s.run("", "build", id, "--boards", "1", "--dry-run", "--csv", "-")
	if code != 0 || !strings.HasPrefix(out, "location,stock_id") || !strings.Contains(errs, "Pick list") && !strings.Contains(errs, "pick") {
		t.Errorf("build --csv -: exit %d\nstdout:\n%s\nstderr:\n%s", code, out, errs)
	}
	out, errs, code = s.run("", "report", id, "-o", "-")
	if code != 0 || !strings.HasPrefix(strings.TrimSpace(out), "<!DOCTYPE html>") || !strings.HasSuffix(strings.TrimSpace(out), "</html>") {
		t.Errorf("report -o -: exit %d, stdout starts %.40q ends %.40q, stderr %q", code, out, out[max(0, len(out)-40):], errs)
	}
}
