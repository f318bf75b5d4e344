package piv

import (
	"bytes"
	"encoding/json"
	"errors"
	"io"
	"os"
)

// MaxJSONBytes is the largest JSON summary ReadJSON reads (64 MiB), checked before reading.
const MaxJSONBytes = 64 << 20

// ReadJSON reads a JSON file written by WriteJSON (a run's summary) into v. Fields of the file
// that v does not have are ignored, so newer summaries still read; a syntax error or a value of
// the wrong type is reported with the file, line and column.
func ReadJSON(path string, v any) error {
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	defer f.Close()
	MarkInput(path)
	st, err := f.Stat()
	if err != nil {
		return err
	}
	if st.Size() > MaxJSONBytes {
		return Errorf(path, 0, 0, "JSON file of %d bytes is larger than the limit of %d bytes", st.Size(), MaxJSONBytes)
	}
	data, err := io.ReadAll(io.LimitReader(f, MaxJSONBytes+1))
	if err != nil {
		return Errorf(path, 0, 0, "%v", err)
	}
	return DecodeJSON(data, path, v)
}

// DecodeJSON decodes one JSON value from data into v as ReadJSON does; name is used in
// error messages.
func DecodeJSON(data []byte, name string, v any) error {
	if len(data) > MaxJSONBytes {
		return Errorf(name, 0, 0, "JSON of %d bytes is larger than the limit of %d bytes", len(data), MaxJSONBytes)
	}
	dec := json.NewDecoder(bytes.NewReader(data))
	err := dec.Decode(v)
	if err == nil {
		// Only white space may follow the value.
		off := dec.InputOffset()
		rest := data[off:]
		if trimmed := bytes.TrimLeft(rest, " \t\r\n"); len(trimmed) > 0 {
			line, col := lineCol(data, off+int64(len(rest)-len(trimmed)))
			return Errorf(name, line, col, "unexpected data after the JSON value")
		}
		return nil
	}
	var syn *json.SyntaxError
	var typ *json.UnmarshalTypeError
	switch {
	case errors.As(err, &syn):
		line, col := lineCol(data, syn.Offset)
		return Errorf(name, line, col, "%v", syn)
	case errors.As(err, &typ):
		line, col := lineCol(data, typ.Offset)
		field := typ.Field
		if field == "" {
			field = "value"
		}
		return Errorf(name, line, col, "%s: expected %v, found JSON %s", field, typ.Type, typ.Value)
	case errors.Is(err, io.EOF), errors.Is(err, io.ErrUnexpectedEOF):
		line, col := lineCol(data, int64(len(data)))
		return Errorf(name, line, col, "the JSON ends before its value is complete")
	}
	return Errorf(name, 0, 0, "%v", err)
}

// lineCol converts a byte offset into a 1-based line and column.
func lineCol(data []byte, off int64) (line, col int) {
	off = max(0, min(off, int64(len(data))))
	before := data[:off]
	line = bytes.Count(before, []byte{'\n'}) + 1
	col = int(off) - (bytes.LastIndexByte(before, '\n') + 1) + 1
	return line, col
}
