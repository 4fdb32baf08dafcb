package config

import (
	"fmt"
	"strings"

	"github.com/pelletier/go-toml/v2/unstable"
)

// keyLines maps the path of every table and key in a TOML document to the line
// where it is written. Paths join tables and keys with dots; entries of an
// array of tables carry their index counted from 1, as in "arm[2].pitch".
type keyLines struct {
	lines  map[string]int
	cols   map[string]int   // column of each key
	arrays map[string][]int // header lines of each array of tables, by unqualified path
	tables []tableLine      // table headers in the order of the document
}

// tableLine is a table header: its line, key parts and qualified path.
type tableLine struct {
	line      int
	parts     []string
	qualified string
}

// locateKeys scans a TOML document. A document that does not parse gives the
// lines found before the problem.
func locateKeys(data []byte) *keyLines {
	kl := &keyLines{lines: map[string]int{}, cols: map[string]int{}, arrays: map[string][]int{}}
	var p unstable.Parser
	p.Reset(data)
	table := "" // qualified path of the current table
	for p.NextExpression() {
		e := p.Expression()
		switch e.Kind {
		case unstable.Table, unstable.ArrayTable:
			parts, line, _ := keyParts(&p, e.Key())
			if e.Kind == unstable.ArrayTable {
				plain := strings.Join(parts, ".")
				kl.arrays[plain] = append(kl.arrays[plain], line)
			}
			table = kl.qualify(parts)
			if _, ok := kl.lines[table]; !ok {
				kl.lines[table] = line
			}
			kl.tables = append(kl.tables, tableLine{line, parts, table})
		case unstable.KeyValue:
			kl.keyValue(&p, table, e)
		}
	}
	return kl
}

// keyValue records a key and, for an inline table, the keys inside it.
func (kl *keyLines) keyValue(p *unstable.Parser, prefix string, e *unstable.Node) {
	parts, line, col := keyParts(p, e.Key())
	path := join(prefix, strings.Join(parts, "."))
	kl.lines[path] = line
	kl.cols[path] = col
	if v := e.Value(); v.Kind == unstable.InlineTable {
		it := v.Children()
		for it.Next() {
			if c := it.Node(); c.Kind == unstable.KeyValue {
				kl.keyValue(p, path, c)
			}
		}
	}
}

// qualify joins key parts, adding the current index after each prefix that
// names an array of tables.
func (kl *keyLines) qualify(parts []string) string {
	plain, qualified := "", ""
	for _, part := range parts {
		plain = join(plain, part)
		qualified = join(qualified, part)
		if n := len(kl.arrays[plain]); n > 0 {
			qualified += fmt.Sprintf("[%d]", n)
		}
	}
	return qualified
}

// keyParts returns the parts of a dotted key and the line and column of its
// first part.
func keyParts(p *unstable.Parser, it unstable.Iterator) ([]string, int, int) {
	var parts []string
	line, col := 0, 0
	for it.Next() {
		n := it.Node()
		if line == 0 {
			start := p.Shape(n.Raw).Start
			line, col = start.Line, start.Column
		}
		parts = append(parts, string(n.Data))
	}
	return parts, line, col
}

// at returns the path of the key written last before column col on line, or
// "" if no key starts there.
func (kl *keyLines) at(line, col int) string {
	best, bestCol := "", 0
	for path, l := range kl.lines {
		c, ok := kl.cols[path]
		if !ok || l != line || c > col {
			continue
		}
		if c > bestCol || c == bestCol && len(path) > len(best) {
			best, bestCol = path, c
		}
	}
	return best
}

// find returns the line of key, or of the nearest enclosing table written in
// the document, or 0.
func (kl *keyLines) find(key string) int {
	for key != "" {
		if line, ok := kl.lines[key]; ok {
			return line
		}
		switch {
		case strings.HasSuffix(key, "]") && strings.LastIndexByte(key, '[') > strings.LastIndexByte(key, '.'):
			key = key[:strings.LastIndexByte(key, '[')]
		case strings.LastIndexByte(key, '.') >= 0:
			key = key[:strings.LastIndexByte(key, '.')]
		default:
			key = ""
		}
	}
	return 0
}

// tableAt returns the table header in force at line, or nil at the top level.
func (kl *keyLines) tableAt(line int) *tableLine {
	var t *tableLine
	for i := range kl.tables {
		if kl.tables[i].line <= line {
			t = &kl.tables[i]
		}
	}
	return t
}

// entry returns the 1-based index of the entry of the array of tables at path
// (unqualified) that holds line, or 0.
func (kl *keyLines) entry(path string, line int) int {
	idx := 0
	for i, l := range kl.arrays[path] {
		if l <= line {
			idx = i + 1
		}
	}
	return idx
}

func join(a, b string) string {
	if a == "" {
		return b
	}
	if b == "" {
		return a
	}
	return a + "." + b
}
