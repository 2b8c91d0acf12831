package spec

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
	"regexp"
	"sort"
	"strconv"
	"strings"

	"go.yaml.in/yaml/v3"
)

// Problem is one thing wrong in a spec file: where it is, the key path
// (e.g. "limits.overshoot_pct.max") and what is wrong. Line and Column are
// 1-based; 0 means the position is not known.
type Problem struct {
	Line, Column int
	Key          string
	Msg          string
}

// Error lists every problem found in one spec file. Its Error method
// prints one problem per line as "file:line:column: key: message".
type Error struct {
	File     string
	Problems []Problem
}

// Error lists the problems, one per line.
func (e *Error) Error() string {
	lines := make([]string, 0, len(e.Problems))
	for _, p := range e.Problems {
		var b strings.Builder
		b.WriteString(e.File)
		if p.Line > 0 {
			fmt.Fprintf(&b, ":%d", p.Line)
			if p.Column > 0 {
				fmt.Fprintf(&b, ":%d", p.Column)
			}
		}
		b.WriteString(": ")
		if p.Key != "" {
			b.WriteString(p.Key)
			b.WriteString(": ")
		}
		b.WriteString(p.Msg)
		lines = append(lines, b.String())
	}
	if len(lines) == 0 {
		return e.File + ": invalid spec"
	}
	return strings.Join(lines, "\n")
}

// err returns the collected problems sorted by position, or nil.
func (p *parser) err() error {
	if len(p.probs) == 0 {
		return nil
	}
	probs := append([]Problem(nil), p.probs...)
	sort.SliceStable(probs, func(i, j int) bool {
		li, lj := probs[i].Line, probs[j].Line
		if li == 0 {
			li = math.MaxInt
		}
		if lj == 0 {
			lj = math.MaxInt
		}
		if li != lj {
			return li < lj
		}
		return probs[i].Column < probs[j].Column
	})
	return &Error{File: p.file, Problems: probs}
}

// problem records a problem at a key path and marks the path bad, so that
// later checks of the same value stay quiet.
func (p *parser) problem(path string, side nodeSide, format string, a ...any) {
	n := p.node(path, side)
	pr := Problem{Key: path, Msg: fmt.Sprintf(format, a...)}
	if n != nil {
		pr.Line, pr.Column = n.Line, n.Column
	}
	p.probs = append(p.probs, pr)
	p.bad[path] = true
}

// problemAt records a problem at a node found by the walk and drops the
// node from what is decoded.
func (p *parser) problemAt(n *yaml.Node, path, format string, a ...any) {
	p.probs = append(p.probs, Problem{Line: n.Line, Column: n.Column, Key: path, Msg: fmt.Sprintf(format, a...)})
	p.bad[path] = true
	p.drop[n] = true
}

var yamlLine = regexp.MustCompile(`^yaml: line (\d+): (.*)$`)

// syntaxProblem turns a YAML syntax error into a problem with its line.
// The YAML library counts lines from 1 for errors found while scanning, but
// from 0 for "did not find expected …" errors, whose line is where the
// unclosed part starts; those are shifted to count from 1 and say so. When
// the library points past the last line (it places the end of the file on
// a line of its own), the problem is put on the last line and said to be
// at the end of the file.
func syntaxProblem(err error, data []byte) Problem {
	msg := strings.TrimPrefix(err.Error(), "yaml: ")
	last := lastLine(data)
	atEnd := func(msg string) Problem {
		return Problem{Line: last, Msg: "invalid YAML: " + msg + " at the end of the file: a bracket, brace or quote opened earlier is not closed"}
	}
	if m := yamlLine.FindStringSubmatch(err.Error()); m != nil {
		n, _ := strconv.Atoi(m[1])
		msg = m[2]
		if strings.HasPrefix(msg, "did not find expected") {
			if n+1 > last {
				return atEnd(msg)
			}
			return Problem{Line: n + 1, Msg: "invalid YAML: " + msg + " in the part that starts on this line"}
		}
		if n > last {
			return atEnd(msg)
		}
		return Problem{Line: n, Msg: "invalid YAML: " + msg}
	}
	if strings.HasPrefix(msg, "did not find expected") {
		return Problem{Line: 1, Msg: "invalid YAML: " + msg + " in the part that starts on this line"}
	}
	return Problem{Msg: "invalid YAML: " + msg}
}

// statReason shortens an os.Stat error to its cause.
func statReason(err error) string {
	var pe *os.PathError
	if errors.As(err, &pe) {
		if errors.Is(pe.Err, os.ErrNotExist) {
			return "no such file"
		}
		return pe.Err.Error()
	}
	return err.Error()
}

// lastLine is the number of the last line of data that holds anything (a
// final line break opens no line of its own), at least 1.
func lastLine(data []byte) int {
	last := bytes.Count(data, []byte("\n"))
	if len(data) > 0 && data[len(data)-1] != '\n' {
		last++
	}
	return max(last, 1)
}
