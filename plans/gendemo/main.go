package main

import (
	"bufio"
	"flag"
	"fmt"
	"io"
	"os"
)

// Fixed design of the example data.
const (
	nRows     = 1800
	seedHi    = 20250611
	seedLo    = 1800
	districts = 24
)

func main() {
	out := flag.String("out", "plans/data/quietstreets.csv", "output CSV file")
	flag.Parse()
	if flag.NArg() > 0 {
		fmt.Fprintf(os.Stderr, "gendemo: unexpected argument %q\n", flag.Arg(0))
		os.Exit(2)
	}
	if err := writeFile(*out); err != nil {
		fmt.Fprintln(os.Stderr, "gendemo:", err)
		os.Exit(1)
	}
}

// writeFile writes the example data to path.
func writeFile(path string) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	w := bufio.NewWriter(f)
	if err := generate(w); err != nil {
		f.Close()
		return err
	}
	if err := w.Flush(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// generate writes the header and the nRows simulated rows to w.
func generate(w io.Writer) error {
	g := newGen(seedHi, seedLo)
	if _, err := fmt.Fprintln(w, "safety,pilot,female,age,child_home,years_resident,cyclist,street_type,district"); err != nil {
		return err
	}
	for i := 0; i < nRows; i++ {
		r, err := g.resident()
		if err != nil {
			return fmt.Errorf("row %d: %w", i+1, err)
		}
		if _, err := io.WriteString(w, r.csv()); err != nil {
			return err
		}
	}
	return nil
}
