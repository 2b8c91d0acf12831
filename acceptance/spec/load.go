package spec

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"reflect"
	"strings"

	"go.yaml.in/yaml/v3"
)

// Load reads, parses and validates the spec file at path. Besides the
// checks of Parse it verifies that report.logo, when set, names an
// existing file (relative paths are taken from the spec file's folder).
// Problems in the file are returned together as a *Error.
func Load(path string) (*Spec, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("read spec: %w", err)
	}
	s, p := parseDoc(data, path)
	if logo := p.spec.Report.Logo; logo != "" && !p.skip("report.logo") {
		full := logo
		if !filepath.IsAbs(full) {
			full = filepath.Join(filepath.Dir(path), logo)
		}
		fi, serr := os.Stat(full)
		switch {
		case serr != nil:
			p.problem("report.logo", valNode, "cannot use logo %s (paths are relative to the spec file): %v", full, statReason(serr))
		case fi.IsDir():
			p.problem("report.logo", valNode, "%s is a folder, not an image file", full)
		}
	}
	if err := p.err(); err != nil {
		return nil, err
	}
	return s, nil
}

// Parse parses and validates a spec from data; name is the file name
// used in messages and stored as Source. Parsing is strict: unknown keys,
// wrong types and out-of-range values are all reported, each with its line,
// column and key path, in one *Error. On success the defaults are
// applied and SHA256 holds the hex digest of data.
func Parse(data []byte, name string) (*Spec, error) {
	s, p := parseDoc(data, name)
	if err := p.err(); err != nil {
		return nil, err
	}
	return s, nil
}

// parseDoc does all of Parse's work and keeps the parser, so that
// Load can add its own problems.
func parseDoc(data []byte, name string) (*Spec, *parser) {
	p := &parser{file: name, locs: map[string]loc{}, bad: map[string]bool{}, spec: &Spec{}, drop: map[*yaml.Node]bool{}}
	dec := yaml.NewDecoder(bytes.NewReader(data))
	var doc yaml.Node
	if err := dec.Decode(&doc); err != nil {
		if errors.Is(err, io.EOF) {
			p.probs = append(p.probs, Problem{Msg: "the file is empty; `stepgate spec init` prints a template"})
		} else {
			p.probs = append(p.probs, syntaxProblem(err, data))
		}
		return nil, p
	}
	var extra yaml.Node
	if err := dec.Decode(&extra); err == nil {
		p.probs = append(p.probs, Problem{Line: extra.Line, Column: extra.Column, Msg: "only one YAML document is allowed; remove the '---' separator and what follows"})
	} else if !errors.Is(err, io.EOF) {
		p.probs = append(p.probs, syntaxProblem(err, data))
	}
	root := &doc
	if root.Kind == yaml.DocumentNode && len(root.Content) == 1 {
		root = root.Content[0]
	}
	root = deref(root)
	p.root = root
	if isNull(root) {
		line, col := root.Line, root.Column
		if line > lastLine(data) {
			// An empty document ("---" alone) has no token to point at; the
			// parser places it after the end of the file.
			line, col = 0, 0
		}
		p.probs = append(p.probs, Problem{Line: line, Column: col, Msg: "the file holds no keys; `stepgate spec init` prints a template"})
		return nil, p
	}
	if root.Kind != yaml.MappingNode {
		p.probs = append(p.probs, Problem{Line: root.Line, Column: root.Column,
			Msg: fmt.Sprintf("a spec must be a mapping of keys (%s), got %s", strings.Join(keys(reflect.TypeOf(Spec{})), ", "), describe(root))})
		return nil, p
	}
	p.walk(root, reflect.TypeOf(Spec{}), "")

	if len(p.probs) == 0 {
		// The walk has checked every key and type; the strict decoder
		// confirms it.
		strict := yaml.NewDecoder(bytes.NewReader(data))
		strict.KnownFields(true)
		if err := strict.Decode(p.spec); err != nil {
			p.probs = append(p.probs, Problem{Msg: "cannot decode: " + strings.TrimPrefix(err.Error(), "yaml: ")})
		}
	} else if err := p.clean(root).Decode(p.spec); err != nil {
		// The rejected nodes are gone, so this is not expected; report it
		// rather than judge with a half-read spec.
		p.probs = append(p.probs, Problem{Msg: "cannot decode: " + strings.TrimPrefix(err.Error(), "yaml: ")})
	}
	p.defaults()
	p.validate()
	s := p.spec
	s.Source = name
	sum := sha256.Sum256(data)
	s.SHA256 = hex.EncodeToString(sum[:])
	return s, p
}
