package cli

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"

	"drawerfit/fault"
)

// forceHelp is the help text of --force on every command that writes a
// file.
const forceHelp = "replace an existing output file"

// writeOutputFile is the one way a command writes a file the user named
// (stock export FILE, fit --netlist, --report, report -o, build --csv):
//
//   - "-" writes to standard output;
//   - a new name is written through a temporary file in the same folder,
//     synced and renamed into place, so a reader sees nothing or all;
//   - an existing regular file is refused unless force, since it may be
//     the only backup; with force it is replaced the same atomic way and
//     keeps its permission bits;
//   - a device or a named pipe (/dev/stdout, a FIFO) is written straight
//     through, never replaced by a regular file;
//   - a symbolic link is followed and its target treated as above (a
//     dangling link creates its target); the link itself stays;
//   - a folder, a socket or a missing folder is refused with a plain
//     message.
//
// write is called once; if it fails nothing is left behind under a new
// name and an existing file is unchanged.
func (e *Env) writeOutputFile(path string, force bool, write func(io.Writer) error) error {
	if path == "-" {
		return write(e.Out)
	}
	return writeFileAt(path, path, force, write, 0)
}

// checkOutputFile refuses, before a command does its work, an output path
// that writeOutputFile would refuse: an existing regular file without
// force, a folder, a missing folder. A build or a fit then never runs only
// to find its file cannot be written.
func checkOutputFile(path string, force bool) error {
	if path == "" || path == "-" {
		return nil
	}
	return writeFileAt(path, path, force, nil, 0)
}

// writeFileAt writes target for the path the user named (they differ when
// a symbolic link was followed); depth counts links followed.
func writeFileAt(named, target string, force bool, write func(io.Writer) error, depth int) error {
	via := ""
	if named != target {
		via = fmt.Sprintf(" (the target of the link %s)", named)
	}
	fi, err := os.Lstat(target)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		if write == nil {
			return checkFolder(named, target)
		}
		return writeAtomic(named, target, 0o644, write)
	case err != nil:
		return fmt.Errorf("write %s%s: %w", target, via, err)
	}
	mode := fi.Mode()
	switch {
	case mode&fs.ModeSymlink != 0:
		if depth >= 40 { // Linux's limit on links in one lookup (path_resolution(7))
			return fault.Invalidf("cannot write %s: too many symbolic links", named)
		}
		link, err := os.Readlink(target)
		if err != nil {
			return fmt.Errorf("write %s: %w", named, err)
		}
		if !filepath.IsAbs(link) {
			link = filepath.Join(filepath.Dir(target), link)
		}
		return writeFileAt(named, link, force, write, depth+1)
	case mode.IsRegular():
		if !force {
			return fault.Conflictf("%s%s already exists; nothing was written (add --force to replace it, or give a new name)", target, via)
		}
		if write == nil {
			return nil
		}
		return writeAtomic(named, target, mode.Perm(), write)
	case mode.IsDir():
		return fault.Invalidf("%s%s is a folder; give a file name", target, via)
	case mode&(fs.ModeDevice|fs.ModeCharDevice|fs.ModeNamedPipe) != 0:
		if write == nil {
			return nil
		}
		f, err := os.OpenFile(target, os.O_WRONLY, 0)
		if err != nil {
			return fmt.Errorf("write %s%s: %w", target, via, err)
		}
		if err := write(f); err != nil {
			f.Close()
			return err
		}
		if err := f.Close(); err != nil {
			return fmt.Errorf("write %s%s: %w", target, via, err)
		}
		return nil
	default:
		return fault.Invalidf("%s%s is not a regular file, a device or a pipe; drawerfit does not write to it", target, via)
	}
}

// writeAtomic writes target through a temporary file in its folder,
// synced and then renamed over it, with permission bits perm.
func writeAtomic(named, target string, perm fs.FileMode, write func(io.Writer) error) (err error) {
	if err := checkFolder(named, target); err != nil {
		return err
	}
	dir := filepath.Dir(target)
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(target)+".*.tmp")
	if err != nil {
		if errors.Is(err, fs.ErrPermission) {
			return fault.Conflictf("cannot write %s: this user may not create files in the folder %s", named, dir)
		}
		return fmt.Errorf("write %s: %w", named, err)
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	if err := write(tmp); err != nil {
		return err
	}
	if err := tmp.Chmod(perm); err != nil {
		return fmt.Errorf("write %s: %w", named, err)
	}
	if err := tmp.Sync(); err != nil {
		return fmt.Errorf("write %s: %w", named, err)
	}
	if err := tmp.Close(); err != nil {
		return fmt.Errorf("write %s: %w", named, err)
	}
	if err := os.Rename(tmp.Name(), target); err != nil {
		return fmt.Errorf("write %s: %w", named, err)
	}
	// Make the rename itself durable (best effort; not all systems allow
	// syncing a folder).
	if d, derr := os.Open(dir); derr == nil {
		d.Sync()
		d.Close()
	}
	return nil
}

// checkFolder refuses a target whose folder does not exist.
func checkFolder(named, target string) error {
	dir := filepath.Dir(target)
	if fi, err := os.Stat(dir); err != nil || !fi.IsDir() {
		return fault.NotFoundf("cannot write %s: the folder %s does not exist", named, dir)
	}
	return nil
}
