package main

import (
	"bufio"
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// writeOutput sends what write produces to stdout when path is "" or "-",
// otherwise to path, atomically: the data goes to a temporary file in the
// same directory that replaces path only once write succeeded, so a
// failed run never leaves a truncated file or clobbers an old one.
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

func writeFileAtomic(path string, write func(w io.Writer) error) (err error) {
	dir := filepath.Dir(path)
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp*")
	if err != nil {
		return fmt.Errorf("cannot write %s: %w", path, err)
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	bw := bufio.NewWriter(tmp)
	if err = write(bw); err != nil {
		return err
	}
	if err = bw.Flush(); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err = tmp.Sync(); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err = tmp.Close(); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err = os.Chmod(tmp.Name(), 0o644); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err = os.Rename(tmp.Name(), path); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	return nil
}
