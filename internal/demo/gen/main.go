// Command gen builds the demo run embedded in wakekit from a time-resolved reference series of
// an axisymmetric starting jet (columns x, r, u, v[, p] in SI units, listed in a frames.csv
// index with columns frame, file, t). It keeps every n-th frame, drops everything but the
// velocity, adds seeded Gaussian measurement noise and writes gzip CSV files plus a frame index.
//
// It is run by hand when the demo data change; wakekit itself never needs it:
//
//	go run ./internal/demo/gen -ref REFERENCE_FOLDER -out internal/demo/data
package main

import (
	"bufio"
	"compress/gzip"
	"encoding/csv"
	"flag"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
)

func main() {
	ref := flag.String("ref", "", "reference folder holding frames.csv and the frame files")
	out := flag.String("out", "internal/demo/data", "output folder")
	every := flag.Int("every", 2, "keep every n-th frame")
	first := flag.Int("first", 1, "first frame kept")
	sigma := flag.Float64("sigma", 4e-4, "standard deviation of the added velocity noise [m/s]")
	seed := flag.Uint64("seed", 25, "noise seed")
	flag.Parse()
	if *ref == "" {
		fmt.Fprintln(os.Stderr, "gen: -ref is required")
		os.Exit(2)
	}
	if err := run(*ref, *out, *first, *every, *sigma, *seed); err != nil {
		fmt.Fprintln(os.Stderr, "gen:", err)
		os.Exit(1)
	}
}

func run(ref, out string, first, every int, sigma float64, seed uint64) error {
	idx, err := readCSV(filepath.Join(ref, "frames.csv"))
	if err != nil {
		return err
	}
	if err := os.MkdirAll(out, 0o755); err != nil {
		return err
	}
	rng := rand.New(rand.NewPCG(seed, 0x7425))
	var index [][]string
	for k := first + 1; k < len(idx); k += every {
		row := idx[k]
		name := fmt.Sprintf("tt25_run07_%04d.csv.gz", len(index))
		rows, err := readCSV(filepath.Join(ref, row[1]))
		if err != nil {
			return err
		}
		if err := writeFrame(filepath.Join(out, name), rows[1:], sigma, rng); err != nil {
			return err
		}
		index = append(index, []string{strconv.Itoa(len(index)), name, row[2]})
	}
	f, err := os.Create(filepath.Join(out, "frames.csv"))
	if err != nil {
		return err
	}
	w := csv.NewWriter(f)
	w.Write([]string{"frame", "file", "t"})
	w.WriteAll(index)
	if err := w.Error(); err != nil {
		return err
	}
	return f.Close()
}

func readCSV(path string) ([][]string, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return csv.NewReader(bufio.NewReader(f)).ReadAll()
}

// writeFrame writes x, r [m] and the noisy u, v [mm/s] rounded to 0.01 mm/s, well below the
// noise level, so the files compress well.
func writeFrame(path string, rows [][]string, sigma float64, rng *rand.Rand) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	zw, _ := gzip.NewWriterLevel(f, gzip.BestCompression)
	bw := bufio.NewWriter(zw)
	fmt.Fprintln(bw, "# TT-25 thruster, tank B, run 07: meridional plane, x axial from the exit plane, r from the axis")
	fmt.Fprintln(bw, "x [m],r [m],u [mm/s],v [mm/s]")
	for _, r := range rows {
		u, err1 := strconv.ParseFloat(r[2], 64)
		v, err2 := strconv.ParseFloat(r[3], 64)
		if err1 != nil || err2 != nil {
			return fmt.Errorf("%s: bad velocity in row %v", path, r)
		}
		u += sigma * rng.NormFloat64()
		v += sigma * rng.NormFloat64()
		fmt.Fprintf(bw, "%s,%s,%.2f,%.2f\n", r[0], r[1], 1000*u, 1000*v)
	}
	if err := bw.Flush(); err != nil {
		return err
	}
	if err := zw.Close(); err != nil {
		return err
	}
	return f.Close()
}
