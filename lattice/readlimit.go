package lattice

import (
	"fmt"
	"io"
	"os"
)

// ReadAllLimited reads r to its end, as io.ReadAll does, but refuses a
// document larger than MaxFileBytes: a regular file by its size before
// anything is read, any other stream (a pipe, /dev/zero) once it has
// delivered one byte more than the limit. name prefixes the error.
func ReadAllLimited(r io.Reader, name string) ([]byte, error) {
	tooLarge := func(what string) error {
		return fmt.Errorf("%s: %s larger than %d MiB (lattice.MaxFileBytes), more than any input file this program reads", name, what, MaxFileBytes>>20)
	}
	if f, ok := r.(*os.File); ok {
		if fi, err := f.Stat(); err == nil && fi.Mode().IsRegular() && fi.Size() > MaxFileBytes {
			return nil, tooLarge(fmt.Sprintf("%d MiB,", fi.Size()>>20))
		}
	}
	data, err := io.ReadAll(io.LimitReader(r, MaxFileBytes+1))
	if err != nil {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	if len(data) > MaxFileBytes {
		return nil, tooLarge("the input is")
	}
	return data, nil
}
