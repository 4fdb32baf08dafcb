package catalog

import (
	"fmt"
	"strings"
)

// MaxProblems is the number of problems an [*Error] lists in full; any
// further problems are only counted (in Error.More).
const MaxProblems = 50

// Problem is one thing wrong with a catalog file.
type Problem struct {
	// File is the name the catalog was read under.
	File string
	// Line is the 1-based line number in the file, or 0 for a problem of
	// the whole file (such as an empty file).
	Line int
	// Column is the 1-based field number within the line, or 0 when the
	// problem is not tied to one field (such as a missing column).
	Column int
	// ColumnName is the column concerned, as written in the header, or the
	// canonical name of a column that is missing; it may be empty.
	ColumnName string
	// Value is the field's text after trimming; it is meaningful only when
	// Column > 0.
	Value string
	// Reason says what is wrong and what was expected.
	Reason string
}

// String formats the problem as
//
//	file:line:column (name): value "text": reason
//
// leaving out the parts that do not apply.
func (p Problem) String() string {
	var b strings.Builder
	b.WriteString(p.File)
	if p.Line > 0 {
		fmt.Fprintf(&b, ":%d", p.Line)
		if p.Column > 0 {
			fmt.Fprintf(&b, ":%d", p.Column)
		}
	}
	if p.ColumnName != "" {
		fmt.Fprintf(&b, " (%s)", p.ColumnName)
	}
	b.WriteString(": ")
	if p.Column > 0 {
		fmt.Fprintf(&b, "value %q: ", p.Value)
	}
	b.WriteString(p.Reason)
	return b.String()
}

// Error is the error [Read] returns for a catalog it refuses: the problems
// found, in file order. At most [MaxProblems] are kept; More counts the rest.
type Error struct {
	// File is the name the catalog was read under.
	File string
	// Problems lists the problems found, at most MaxProblems of them.
	Problems []Problem
	// More is the number of further problems found but not listed.
	More int
	// Kind names the file in messages: "" for a catalog, "places file" for ReadPlaces.
	Kind string
}

// Error returns one problem per line (see [Problem.String]). With more than
// one problem a first line gives the count, and a last line the number of
// problems not listed.
func (e *Error) Error() string {
	if len(e.Problems) == 1 && e.More == 0 {
		return e.Problems[0].String()
	}
	var b strings.Builder
	n := len(e.Problems) + e.More
	kind := e.Kind
	if kind == "" {
		kind = "catalog"
	}
	fmt.Fprintf(&b, "%s: %s refused, %d problems:", e.File, kind, n)
	for _, p := range e.Problems {
		b.WriteString("\n")
		b.WriteString(p.String())
	}
	if e.More > 0 {
		fmt.Fprintf(&b, "\nand %d more", e.More)
	}
	return b.String()
}

// problems collects the problems of one file.
type problems struct {
	err Error
}

func (ps *problems) add(p Problem) {
	p.File = ps.err.File
	if len(ps.err.Problems) >= MaxProblems {
		ps.err.More++
		return
	}
	ps.err.Problems = append(ps.err.Problems, p)
}

func (ps *problems) count() int { return len(ps.err.Problems) + ps.err.More }
