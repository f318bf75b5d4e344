package piv

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

type testSummary struct {
	Command string      `json:"command"`
	Frames  int         `json:"frames"`
	Peak    JSONFloat   `json:"peak_vorticity"`
	Impulse []JSONFloat `json:"impulse"`
}

// A summary written by WriteJSON reads back to the same values, undefined (NaN) ones included.
func TestReadJSONRoundTrip(t *testing.T) {
	path := filepath.Join(t.TempDir(), "summary.json")
	want := testSummary{Command: "jet", Frames: 12, Peak: 41.25, Impulse: []JSONFloat{1e-3, JSONFloat(math.NaN()), -2.5e-7}}
	if err := WriteJSON(path, want); err != nil {
		t.Fatal(err)
	}
	var got testSummary
	if err := ReadJSON(path, &got); err != nil {
		t.Fatal(err)
	}
	if got.Command != want.Command || got.Frames != want.Frames || got.Peak != want.Peak ||
		len(got.Impulse) != 3 || got.Impulse[0] != want.Impulse[0] || !math.IsNaN(float64(got.Impulse[1])) || got.Impulse[2] != want.Impulse[2] {
		t.Errorf("read %+v, wrote %+v", got, want)
	}
}

func TestDecodeJSONErrors(t *testing.T) {
	for _, c := range []struct{ text, want string }{
		{"{\n  \"frames\": \"twelve\"\n}", "s.json:2:"},
		{"{\n  \"frames\": 12,\n  \"peak_vorticity\": 1.2.3\n}", "s.json:3:"},
		{"{\"frames\": 1", "ends before its value is complete"},
		{"{\"frames\": 1}\n{}", "s.json:2:1: unexpected data after the JSON value"},
		{"", "ends before"},
	} {
		var s testSummary
		err := DecodeJSON([]byte(c.text), "s.json", &s)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%q: err = %v, want %q", c.text, err, c.want)
		}
	}
	// Fields a reader does not know are ignored, so newer summaries still read.
	var s testSummary
	if err := DecodeJSON([]byte(`{"frames": 3, "added_later": [1, 2]}`), "s.json", &s); err != nil || s.Frames != 3 {
		t.Errorf("unknown field: %v, %+v", err, s)
	}
}

func TestReadJSONLimit(t *testing.T) {
	path := filepath.Join(t.TempDir(), "huge.json")
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	f.Truncate(MaxJSONBytes + 1)
	f.Close()
	var s testSummary
	if err := ReadJSON(path, &s); err == nil || !strings.Contains(err.Error(), "larger than the limit") {
		t.Errorf("oversized summary: %v", err)
	}
}

// FuzzDecodeJSON: decoding a summary never panics, and errors always name the file.
func FuzzDecodeJSON(f *testing.F) {
	f.Add([]byte(`{"command":"jet","frames":12,"peak_vorticity":null,"impulse":[1e-3,null]}`))
	f.Add([]byte("{\n\"frames\": -1e400}"))
	f.Add([]byte(`[]`))
	f.Fuzz(func(t *testing.T, data []byte) {
		var s testSummary
		if err := DecodeJSON(data, "fuzz.json", &s); err != nil && !strings.HasPrefix(err.Error(), "fuzz.json") {
			t.Fatalf("error does not name the file: %v", err)
		}
	})
}
