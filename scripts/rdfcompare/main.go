// Command rdfcompare is the Go half of scripts/rdfcompare.sh, which checks
// termgrove's RDF readers against Debian's rapper on the same files.
//
//	rdfcompare count vocabulary.ttl        parse with termgrove's reader, print the count and time
//	rdfcompare emit vocabulary.rdf         write the triples as N-Triples (as termgrove check --emit ntriples)
//	rdfcompare compare rapper.nt ours.nt   read two N-Triples files, say whether the graphs are equal
//
// The format is taken from the file extension (.ttl, .nt, .rdf, .jsonld).
package main

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"time"

	"termgrove/concepts/rdf"
)

func main() {
	if len(os.Args) < 3 {
		fmt.Fprintln(os.Stderr, "usage: rdfcompare count FILE | emit FILE | compare A.nt B.nt")
		os.Exit(2)
	}
	var err error
	switch os.Args[1] {
	case "count":
		err = count(os.Args[2])
	case "emit":
		err = emit(os.Args[2])
	case "compare":
		if len(os.Args) != 4 {
			err = errors.New("compare needs two files")
			break
		}
		var same bool
		same, err = compare(os.Args[2], os.Args[3])
		if err == nil && !same {
			os.Exit(1)
		}
	default:
		err = fmt.Errorf("unknown command %q", os.Args[1])
	}
	if err != nil {
		fmt.Fprintln(os.Stderr, "rdfcompare:", err)
		os.Exit(2)
	}
}

// read parses path with the reader its extension names.
func read(path string, fn func(rdf.Triple) error) error {
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	defer f.Close()
	opt := rdf.Options{File: path, Base: "file://" + filepath.ToSlash(path)}
	var r io.Reader = bufio.NewReaderSize(f, 1<<20)
	switch strings.ToLower(filepath.Ext(path)) {
	case ".ttl":
		return rdf.ReadTurtle(r, opt, fn)
	case ".nt":
		return rdf.ReadNTriples(r, opt, fn)
	case ".rdf", ".owl", ".xml":
		return rdf.ReadRDFXML(r, opt, fn)
	case ".jsonld", ".json":
		return rdf.ReadJSONLD(r, opt, fn)
	}
	return fmt.Errorf("%s: unknown extension", path)
}

// count parses a file and prints "triples N seconds S".
func count(path string) error {
	start := time.Now()
	n := 0
	err := read(path, func(rdf.Triple) error { n++; return nil })
	if err != nil {
		return err
	}
	fmt.Printf("triples %d seconds %.3f\n", n, time.Since(start).Seconds())
	return nil
}

// emit writes a file's triples to stdout as N-Triples.
func emit(path string) error {
	out := bufio.NewWriterSize(os.Stdout, 256<<10)
	err := read(path, func(t rdf.Triple) error {
		t.G = rdf.Term{}
		_, err := out.WriteString(t.String() + "\n")
		return err
	})
	if ferr := out.Flush(); err == nil {
		err = ferr
	}
	return err
}

// graph is a file's triples as N-Triples lines, and whether any has a
// blank node (then line equality is not graph equality).
type graph struct {
	lines   []string
	triples []rdf.Triple
	blank   bool
}

func load(path string) (*graph, error) {
	g := &graph{}
	err := read(path, func(t rdf.Triple) error {
		t.G = rdf.Term{}
		g.lines = append(g.lines, t.String())
		if t.S.Kind == rdf.Blank || t.O.Kind == rdf.Blank {
			g.blank = true
		}
		g.triples = append(g.triples, t)
		return nil
	})
	sort.Strings(g.lines)
	return g, err
}

// distinct counts distinct lines of a sorted slice.
func distinct(s []string) int {
	n := 0
	for i := range s {
		if i == 0 || s[i] != s[i-1] {
			n++
		}
	}
	return n
}

// compare prints the counts of both files and whether the graphs are the
// same: equal sorted line sets without blank nodes, else Isomorphic.
func compare(a, b string) (bool, error) {
	ga, err := load(a)
	if err != nil {
		return false, err
	}
	gb, err := load(b)
	if err != nil {
		return false, err
	}
	fmt.Printf("%s: %d triples (%d distinct)\n", a, len(ga.lines), distinct(ga.lines))
	fmt.Printf("%s: %d triples (%d distinct)\n", b, len(gb.lines), distinct(gb.lines))
	if ga.blank || gb.blank {
		ok, why := rdf.Isomorphic(ga.triples, gb.triples)
		if !ok {
			fmt.Println("different graphs:", why)
			return false, nil
		}
		fmt.Println("same graph (isomorphic; blank nodes present)")
		return true, nil
	}
	// Walk both sorted lists and show the first differences.
	i, j, shown := 0, 0, 0
	for i < len(ga.lines) || j < len(gb.lines) {
		switch {
		case j >= len(gb.lines) || i < len(ga.lines) && ga.lines[i] < gb.lines[j]:
			if shown < 10 {
				fmt.Println("only in", a+":", ga.lines[i])
			}
			shown++
			i++
		case i >= len(ga.lines) || gb.lines[j] < ga.lines[i]:
			if shown < 10 {
				fmt.Println("only in", b+":", gb.lines[j])
			}
			shown++
			j++
		default:
			i++
			j++
		}
	}
	if shown > 0 {
		fmt.Printf("different graphs: %d lines differ\n", shown)
		return false, nil
	}
	fmt.Println("same graph (identical sorted N-Triples, no blank nodes)")
	return true, nil
}
