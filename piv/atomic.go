package piv

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"sync"
)

// inputs holds the cleaned absolute paths of every file read in this run, so that no writer
// ever replaces one of them.
var inputs sync.Map

// MarkInput records path as an input of this run; WriteFileAtomic refuses to write over it.
// Readers call it for every file they open.
func MarkInput(path string) {
	if abs, err := filepath.Abs(path); err == nil {
		inputs.Store(filepath.Clean(abs), true)
	}
}

// IsInput reports whether path was read as an input in this run.
func IsInput(path string) bool {
	abs, err := filepath.Abs(path)
	if err != nil {
		return false
	}
	_, ok := inputs.Load(filepath.Clean(abs))
	return ok
}

// WriteFileAtomic writes a file through a temporary file in the same folder, renamed into place
// only when write has succeeded, so a failed or interrupted write leaves no partial output.
// It refuses to write over a file that was read as an input in this run.
func WriteFileAtomic(path string, write func(w io.Writer) error) error {
	if IsInput(path) {
		return fmt.Errorf("%s: refusing to write over an input file; choose another output folder", path)
	}
	dir := filepath.Dir(path)
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp*")
	if err != nil {
		// The temporary name means nothing to the user: say which file and why.
		var pe *fs.PathError
		if errors.As(err, &pe) {
			err = pe.Err
		}
		if errors.Is(err, fs.ErrNotExist) {
			return fmt.Errorf("%s: cannot write: the folder %s does not exist", path, dir)
		}
		return fmt.Errorf("%s: cannot write: %v", path, err)
	}
	name := tmp.Name()
	fail := func(err error) error {
		tmp.Close()
		os.Remove(name)
		return err
	}
	bw := bufio.NewWriterSize(tmp, 1<<16)
	if err := write(bw); err != nil {
		return fail(err)
	}
	if err := bw.Flush(); err != nil {
		return fail(err)
	}
	if err := tmp.Close(); err != nil {
		os.Remove(name)
		return err
	}
	if err := os.Chmod(name, 0o644); err != nil {
		os.Remove(name)
		return err
	}
	if err := os.Rename(name, path); err != nil {
		os.Remove(name)
		return err
	}
	return nil
}
