package config

import (
	"fmt"
	"sort"
	"strings"
)

// FieldError is one problem with one setting of a run configuration. Key is
// the setting's path in the document, with tables joined by dots and [[arm]]
// entries counted from 1: "likelihood.tolerance", "params.R0",
// "arm[2].pitch". For a setting that is missing, Line is that of the table
// that should hold it. Line is 0 when the position is unknown (for example
// for a Config built in code).
type FieldError struct {
	File string // file name as given to Load or Parse; may be empty
	Line int    // 1-based line in the file, 0 if unknown
	Key  string // path of the setting
	Msg  string // what is wrong
	Err  error  // underlying error, if any
}

// Error returns "file:line: key: message".
func (e *FieldError) Error() string {
	var b strings.Builder
	switch {
	case e.File != "" && e.Line > 0:
		fmt.Fprintf(&b, "%s:%d: ", e.File, e.Line)
	case e.File != "":
		fmt.Fprintf(&b, "%s: ", e.File)
	case e.Line > 0:
		fmt.Fprintf(&b, "line %d: ", e.Line)
	}
	if e.Key != "" {
		b.WriteString(e.Key)
		b.WriteString(": ")
	}
	b.WriteString(e.Msg)
	return b.String()
}

// Unwrap returns the underlying error.
func (e *FieldError) Unwrap() error { return e.Err }

// Errors is the list of every problem found in a configuration, in the order
// of their lines. Load, Parse and Validate return it (as an error) when
// anything is wrong; errors.As recovers it.
type Errors []*FieldError

// Error returns the problems one per line.
func (es Errors) Error() string {
	parts := make([]string, len(es))
	for i, e := range es {
		parts[i] = e.Error()
	}
	return strings.Join(parts, "\n")
}

// Unwrap returns the individual errors.
func (es Errors) Unwrap() []error {
	out := make([]error, len(es))
	for i, e := range es {
		out[i] = e
	}
	return out
}

// problems collects field errors, keeping only the first for each key so that
// one mistake does not cascade into several messages.
type problems struct {
	list []*FieldError
	seen map[string]bool
}

func (p *problems) add(key string, err error, format string, args ...any) {
	if p.seen == nil {
		p.seen = map[string]bool{}
	}
	if p.seen[key] {
		return
	}
	p.seen[key] = true
	p.list = append(p.list, &FieldError{Key: key, Msg: fmt.Sprintf(format, args...), Err: err})
}

func (p *problems) addf(key, format string, args ...any) { p.add(key, nil, format, args...) }

// has reports whether key or a setting inside it already has a problem.
func (p *problems) has(key string) bool {
	for k := range p.seen {
		if k == key || strings.HasPrefix(k, key+".") {
			return true
		}
	}
	return false
}

// result returns the collected errors sorted by line, or nil.
func (p *problems) result(file string, lines *keyLines) error {
	if len(p.list) == 0 {
		return nil
	}
	out := make(Errors, len(p.list))
	for i, e := range p.list {
		c := *e
		c.File = file
		if c.Line == 0 && lines != nil {
			c.Line = lines.find(c.Key)
		}
		out[i] = &c
	}
	sort.SliceStable(out, func(i, j int) bool {
		if out[i].Line != out[j].Line {
			return out[i].Line < out[j].Line
		}
		return out[i].Key < out[j].Key
	})
	return out
}
