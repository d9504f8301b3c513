package rdf

import (
	"errors"
	"io"
)

// errTODO marks readers not written yet. Each reader's own file replaces its
// stub below (delete the stub from this file when you write the real one).
var errTODO = errors.New("reader not implemented yet")

// ReadNTriples reads N-Triples, calling fn per triple.
func ReadNTriples(r io.Reader, opt Options, fn func(Triple) error) error { return errTODO }

// ReadNQuads reads N-Quads, calling fn per quad (G set for named graphs).
func ReadNQuads(r io.Reader, opt Options, fn func(Triple) error) error { return errTODO }

// ReadTurtle reads Turtle, calling fn per triple.
func ReadTurtle(r io.Reader, opt Options, fn func(Triple) error) error { return errTODO }
