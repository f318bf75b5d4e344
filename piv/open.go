package piv

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"encoding/binary"
	"errors"
	"io"
	"os"
)

// ReadFile reads one frame from a CSV table (optionally gzip-compressed) with the given options.
func ReadFile(path string, opt ReadOptions) (*Field, error) {
	f, _, err := ReadFileInfo(path, opt)
	return f, err
}

// ReadFileInfo reads one frame from a CSV table like ReadFile and also says how the file was
// read (delimiter, header, columns, units). The file is recorded as an input of this run
// (MarkInput) so that no writer replaces it. Gzip compression is recognised by its magic bytes.
func ReadFileInfo(path string, opt ReadOptions) (*Field, *FileInfo, error) {
	r, size, gz, closer, err := openInput(path, opt)
	if err != nil {
		return nil, nil, err
	}
	defer closer.Close()
	lineLen := 0.0
	if fh, ok := closer.(*os.File); ok && !gz {
		lineLen = sampleLineLength(fh, size)
	}
	f, info, err := readCSV(r, path, size, lineLen, opt)
	if err != nil {
		return nil, nil, err
	}
	info.Gzip = gz
	return f, info, nil
}

// openInput opens a file for reading, checks its size against opt.MaxFileBytes, marks it as an
// input and unwraps gzip. size is the file size, or for gzip the size the trailer gives (a hint
// only).
func openInput(path string, opt ReadOptions) (r io.Reader, size int64, gz bool, c io.Closer, err error) {
	fh, err := os.Open(path)
	if err != nil {
		return nil, 0, false, nil, Errorf(path, 0, 0, "cannot open: %v", errors.Unwrap(err))
	}
	st, err := fh.Stat()
	if err != nil {
		fh.Close()
		return nil, 0, false, nil, Errorf(path, 0, 0, "cannot read: %v", err)
	}
	if st.IsDir() {
		fh.Close()
		return nil, 0, false, nil, Errorf(path, 0, 0, "is a folder, not a file")
	}
	if opt.MaxFileBytes > 0 && st.Size() > opt.MaxFileBytes {
		fh.Close()
		return nil, 0, false, nil, Errorf(path, 0, 0, "file of %d bytes is larger than the limit of %d bytes", st.Size(), opt.MaxFileBytes)
	}
	MarkInput(path)
	br := bufio.NewReaderSize(fh, 1<<16)
	if magic, _ := br.Peek(2); len(magic) == 2 && magic[0] == 0x1f && magic[1] == 0x8b {
		zr, err := gzip.NewReader(br)
		if err != nil {
			fh.Close()
			return nil, 0, false, nil, Errorf(path, 0, 0, "cannot read gzip data: %v", err)
		}
		var lim io.Reader = zr
		if opt.MaxFileBytes > 0 {
			lim = &limitReader{r: zr, left: opt.MaxFileBytes, path: path}
		}
		return lim, gzipSize(fh, st.Size()), true, fh, nil
	}
	return br, st.Size(), false, fh, nil
}

// limitReader fails once more than left bytes have been read, so that a small compressed file
// cannot expand past the file-size limit.
type limitReader struct {
	r    io.Reader
	left int64
	path string
}

func (l *limitReader) Read(p []byte) (int, error) {
	n, err := l.r.Read(p)
	l.left -= int64(n)
	if l.left < 0 {
		return n, Errorf(l.path, 0, 0, "decompressed data is larger than the limit of the file size")
	}
	return n, err
}

// sampleLineLength estimates the shortest mean line length of a large file from windows of
// 64 KiB at a quarter, half, three quarters and the end of the file (0 for small files or on
// failure). The reader uses it to reserve its columns once.
func sampleLineLength(fh *os.File, size int64) float64 {
	const win = 1 << 16
	if size < 16*win {
		return 0
	}
	buf := make([]byte, win)
	best := 0.0
	for _, off := range []int64{size / 4, size / 2, 3 * size / 4, size - win} {
		n, err := fh.ReadAt(buf, off)
		if err != nil && n < win {
			return 0
		}
		lines := bytes.Count(buf[:n], []byte{'\n'})
		if lines < 2 {
			return 0
		}
		if l := float64(n) / float64(lines); best == 0 || l < best {
			best = l
		}
	}
	return best
}

// gzipSize returns the uncompressed size recorded in the ISIZE trailer of a gzip file (RFC 1952
// section 2.3.1: the last four bytes, little-endian, modulo 2^32), or 0 when it cannot be read.
// For a file of several gzip members it is the size of the last one, so it serves only as a
// hint for reserving memory.
func gzipSize(fh *os.File, size int64) int64 {
	if size < 18 {
		return 0
	}
	var b [4]byte
	if _, err := fh.ReadAt(b[:], size-4); err != nil {
		return 0
	}
	// Text tables rarely compress by more than 20 times; a larger claim is not trusted.
	return min(int64(binary.LittleEndian.Uint32(b[:])), 64*size)
}
