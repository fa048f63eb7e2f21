package main

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"os/signal"
	"path/filepath"
	"strings"
	"sync"
	"syscall"

	"warmfit/lattice/model"
)

// The command package's one output helper. Every result a command writes
// goes through writeOutput (stdout or -o FILE) or writeFileAtomic (files
// a command names itself), and every command checks its outputs with
// checkOutputs before it starts working, so that
//
//   - an output that is one of the run's inputs is refused (exit 2) before
//     anything is computed; files are compared by identity (os.SameFile),
//     so a second name, a symlink or a hard link is caught too;
//   - a missing or unwritable directory, or a read-only file, is found
//     before the work, not after it;
//   - "-" (and "") means stdout; a target that is not a regular file
//     (/dev/null, /dev/stdout, a named pipe) is written directly, never
//     replaced by a regular file;
//   - a regular file is replaced atomically: the data go to a temporary
//     file in the same directory that is renamed over the target only once
//     they are complete, so a failed run leaves the old file as it was;
//   - a symlink is followed: its target is replaced and the link stays;
//     an existing file keeps its permission bits;
//   - SIGINT or SIGTERM during a write removes the temporary file before
//     the process exits (status 1).

// outputFile names one output of a run for checkOutputs: the flag that
// gave it (for messages) and the path.
type outputFile struct {
	flag, path string
}

// withCSV lists the outputs of a command whose CSV goes to out (given by
// flag): out itself, its metadata file (--meta, or the default sidecar
// OUT.meta.json), and the command's other outputs.
func withCSV(flag, out string, f csvFlags, outputs ...outputFile) []outputFile {
	all := append([]outputFile{{flag, out}}, outputs...)
	if f.meta != "" {
		return append(all, outputFile{"--meta", f.meta})
	}
	if side := metaSidecarPath(out); side != "" && !f.comments {
		all = append(all, outputFile{"the sidecar of -o", side})
	}
	return all
}

// checkOutputs refuses, as usage errors, outputs that would overwrite an
// input of the run or cannot be written. inputs are paths of files the run
// reads (empty strings and strings that name no file, such as lattice
// specifications, are skipped). It also refuses two outputs that are one
// file. Nothing is created or changed.
func checkOutputs(outputs []outputFile, inputs ...string) error {
	var seen []outputFile
	for _, out := range outputs {
		if out.path == "" || out.path == "-" {
			continue
		}
		fi, err := os.Stat(out.path)
		if err == nil {
			for _, in := range inputs {
				if in == "" || in == "-" {
					continue
				}
				if ii, err := os.Stat(in); err == nil && os.SameFile(fi, ii) {
					return usagef("%s %s is also an input (the same file as %s): refusing to overwrite an input; choose another output name", out.flag, out.path, in)
				}
			}
			for _, prev := range seen {
				// Two outputs to one terminal or pipe are fine; to one
				// regular file, the second would replace the first.
				if pi, err := os.Stat(prev.path); err == nil && fi.Mode().IsRegular() && os.SameFile(fi, pi) {
					return usagef("%s %s and %s %s are the same file; give them different names", prev.flag, prev.path, out.flag, out.path)
				}
			}
		} else {
			for _, prev := range seen {
				if filepath.Clean(prev.path) == filepath.Clean(out.path) {
					return usagef("%s and %s both name %s; give them different names", prev.flag, out.flag, out.path)
				}
			}
		}
		if err := checkWritable(out); err != nil {
			return err
		}
		seen = append(seen, out)
	}
	return nil
}

// checkWritable makes sure out can be written: its directory exists and
// takes new files, and an existing regular file is writable. Devices and
// pipes are not opened here (opening a pipe would wait for a reader).
func checkWritable(out outputFile) error {
	target := resolveOutput(out.path)
	if isDirectTarget(out.path, target) {
		return nil // /dev/stdout behind a pipe resolves to no path at all
	}
	fi, err := os.Stat(target)
	switch {
	case err == nil && fi.IsDir():
		return usagef("%s %s is a directory; give a file name", out.flag, out.path)
	case err == nil && !fi.Mode().IsRegular():
		return nil
	case err == nil:
		f, err := os.OpenFile(target, os.O_WRONLY, 0)
		if err != nil {
			return usagef("%s %s: the file cannot be written (%v)", out.flag, out.path, unwrapPathError(err))
		}
		f.Close()
	case !errors.Is(err, fs.ErrNotExist):
		return usagef("%s %s: %v", out.flag, out.path, unwrapPathError(err))
	}
	dir := filepath.Dir(target)
	di, err := os.Stat(dir)
	if err != nil {
		return usagef("%s %s: directory %s does not exist; create it first", out.flag, out.path, dir)
	}
	if !di.IsDir() {
		return usagef("%s %s: %s is not a directory", out.flag, out.path, dir)
	}
	// The one reliable test of "may I create a file here" is to do it.
	probe, err := os.CreateTemp(dir, ".warmfit-probe*")
	if err != nil {
		return usagef("%s %s: directory %s does not accept new files (%v)", out.flag, out.path, dir, unwrapPathError(err))
	}
	probe.Close()
	os.Remove(probe.Name())
	return nil
}

func unwrapPathError(err error) error {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

// resolveOutput follows symlinks from path to the file that is to be
// written. A dangling link resolves to the path it names (which is then
// created); anything unresolvable is returned as given.
func resolveOutput(path string) string {
	for range 40 { // as deep as the kernel follows links
		li, err := os.Lstat(path)
		if err != nil || li.Mode()&fs.ModeSymlink == 0 {
			return path
		}
		if real, err := filepath.EvalSymlinks(path); err == nil {
			return real
		}
		link, err := os.Readlink(path)
		if err != nil {
			return path
		}
		if !filepath.IsAbs(link) {
			link = filepath.Join(filepath.Dir(path), link)
		}
		path = link
	}
	return path
}

// isDirectTarget reports whether path must be written in place rather
// than replaced: an existing file that is not regular (a device, a pipe,
// a socket), or a name under /dev or /proc/self/fd (such as /dev/stdout,
// which may stand for an open descriptor of a regular file).
func isDirectTarget(path, resolved string) bool {
	for _, p := range []string{path, resolved} {
		c := filepath.Clean(p)
		if strings.HasPrefix(c, "/dev/") || strings.HasPrefix(c, "/proc/") {
			return true
		}
	}
	fi, err := os.Stat(resolved)
	return err == nil && !fi.Mode().IsRegular() && !fi.IsDir()
}

// writeOutput sends what write produces to stdout when path is "" or "-",
// otherwise to path (see writeFileAtomic).
func writeOutput(env *runEnv, path string, write func(w io.Writer) error) error {
	if path == "" || path == "-" {
		bw := bufio.NewWriter(env.Stdout)
		if err := write(bw); err != nil {
			return err
		}
		return bw.Flush()
	}
	return writeFileAtomic(path, write)
}

// writeFileAtomic writes what write produces to path: directly when path
// is a device or pipe, otherwise through a temporary file in the target's
// directory that replaces the target (the end of any symlink chain) only
// once write succeeded. An existing file keeps its permission bits; a new
// one gets 0644.
func writeFileAtomic(path string, write func(w io.Writer) error) error {
	target := resolveOutput(path)
	if isDirectTarget(path, target) {
		return writeDirect(path, write)
	}
	mode := fs.FileMode(0o644)
	if fi, err := os.Stat(target); err == nil {
		if fi.IsDir() {
			return fmt.Errorf("cannot write %s: it is a directory", path)
		}
		mode = fi.Mode().Perm()
	}
	dir := filepath.Dir(target)
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(target)+".tmp*")
	if err != nil {
		return fmt.Errorf("cannot write %s: %w", path, err)
	}
	name := tmp.Name()
	tempFiles.add(name)
	defer tempFiles.remove(name)
	fail := func(err error) error {
		tmp.Close()
		os.Remove(name)
		return err
	}
	bw := bufio.NewWriter(tmp)
	if err := write(bw); err != nil {
		return fail(err)
	}
	if err := bw.Flush(); err != nil {
		return fail(fmt.Errorf("writing %s: %w", path, err))
	}
	if err := tmp.Chmod(mode); err != nil {
		return fail(fmt.Errorf("writing %s: %w", path, err))
	}
	if err := tmp.Sync(); err != nil {
		return fail(fmt.Errorf("writing %s: %w", path, err))
	}
	if err := tmp.Close(); err != nil {
		os.Remove(name)
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err := os.Rename(name, target); err != nil {
		os.Remove(name)
		return fmt.Errorf("writing %s: %w", path, err)
	}
	return nil
}

// writeDirect writes to a device or pipe in place. O_APPEND keeps what a
// shell redirection behind /dev/stdout has already written.
func writeDirect(path string, write func(w io.Writer) error) error {
	f, err := os.OpenFile(path, os.O_WRONLY|os.O_APPEND, 0)
	if err != nil {
		return fmt.Errorf("cannot write %s: %w", path, err)
	}
	bw := bufio.NewWriter(f)
	if err := write(bw); err != nil {
		f.Close()
		return err
	}
	if err := bw.Flush(); err != nil {
		f.Close()
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err := f.Close(); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	return nil
}

// tempFiles holds the temporary files being written, so that an interrupt
// can remove them. The signal handler is installed with the first file
// and stays: it removes whatever is registered and exits with status 1,
// which is what the default action would do, minus the debris.
var tempFiles = &tempRegistry{names: map[string]bool{}}

type tempRegistry struct {
	mu    sync.Mutex
	names map[string]bool
	once  sync.Once
}

func (r *tempRegistry) add(name string) {
	r.once.Do(func() {
		ch := make(chan os.Signal, 1)
		signal.Notify(ch, os.Interrupt, syscall.SIGTERM)
		go func() {
			sig := <-ch
			removed := r.removeAll()
			for _, n := range removed {
				fmt.Fprintf(os.Stderr, "warmfit: %v: removed the unfinished %s\n", sig, n)
			}
			if len(removed) == 0 {
				fmt.Fprintf(os.Stderr, "warmfit: %v\n", sig)
			}
			os.Exit(exitFailure)
		}()
	})
	r.mu.Lock()
	r.names[name] = true
	r.mu.Unlock()
}

func (r *tempRegistry) remove(name string) {
	r.mu.Lock()
	delete(r.names, name)
	r.mu.Unlock()
}

// removeAll deletes every registered file and keeps the lock, so that no
// write can finish its rename after the interrupt.
func (r *tempRegistry) removeAll() []string {
	r.mu.Lock()
	var removed []string
	for n := range r.names {
		if os.Remove(n) == nil {
			removed = append(removed, n)
		}
	}
	return removed
}

// readModelFlag reads the model file given to flag (what names the model
// that flag takes, "the true model"). A data file given there is named
// by the flag, so the message says which file went where.
func readModelFlag(flag, path, what string) (*model.Model, error) {
	m, err := model.ReadFile(path)
	var me *model.Error
	if errors.As(err, &me) && me.Err != nil {
		if msg, ok := strings.CutSuffix(me.Err.Error(), ": were the model and the data swapped?"); ok {
			e := *me
			e.Err = fmt.Errorf("%s: %s takes %s (a model file), and the data go to --data", msg, flag, what)
			return nil, &e
		}
	}
	return m, err
}
