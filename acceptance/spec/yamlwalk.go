package spec

import (
	"fmt"
	"math"
	"reflect"
	"strings"

	"go.yaml.in/yaml/v3"
)

// loc is where a key path was found: its key node (nil for list
// elements) and its value node.
type loc struct {
	key, val *yaml.Node
}

// parser collects problems while reading one spec.
type parser struct {
	file  string
	root  *yaml.Node
	locs  map[string]loc
	bad   map[string]bool
	probs []Problem
	spec  *Spec
	// drop holds the nodes the walk rejected; they are left out when the
	// rest of the file is decoded, so that the remaining checks still run.
	drop map[*yaml.Node]bool
}

// nodeSide picks which node of a key a problem points at.
type nodeSide int

const (
	valNode nodeSide = iota
	keyNode
)

// clean copies a node tree without the nodes the walk rejected: a mapping
// loses the pairs whose key or value was rejected, and a rejected list
// element drops its whole list (the walk marks the list).
func (p *parser) clean(n *yaml.Node) *yaml.Node {
	n = deref(n)
	c := *n
	switch n.Kind {
	case yaml.MappingNode:
		c.Content = nil
		for i := 0; i+1 < len(n.Content); i += 2 {
			k, v := n.Content[i], n.Content[i+1]
			if p.drop[k] || p.drop[v] || p.drop[deref(v)] {
				continue
			}
			c.Content = append(c.Content, k, p.clean(v))
		}
	case yaml.SequenceNode:
		c.Content = nil
		for _, e := range n.Content {
			c.Content = append(c.Content, p.clean(e))
		}
	}
	return &c
}

// skipTree reports whether a path, an ancestor or a descendant already has
// a problem: checks of a whole section use it, since a rejected part was
// left out of the decoded section.
func (p *parser) skipTree(path string) bool {
	if p.skip(path) {
		return true
	}
	for k := range p.bad {
		if strings.HasPrefix(k, path+".") || strings.HasPrefix(k, path+"[") {
			return true
		}
	}
	return false
}

// node finds the node for a path; for a missing key, the nearest present
// ancestor's key, or the document's root.
func (p *parser) node(path string, side nodeSide) *yaml.Node {
	if l, ok := p.locs[path]; ok {
		if side == keyNode && l.key != nil {
			return l.key
		}
		return l.val
	}
	for q := parent(path); q != ""; q = parent(q) {
		if l, ok := p.locs[q]; ok {
			if l.key != nil {
				return l.key
			}
			return l.val
		}
	}
	return p.root
}

// parent strips the last element of a key path ("a.b[2]" → "a.b").
func parent(path string) string {
	i := strings.LastIndexAny(path, ".[")
	if i < 0 {
		return ""
	}
	return path[:i]
}

// skip reports whether a path or one of its ancestors already has a
// problem.
func (p *parser) skip(path string) bool {
	for q := path; q != ""; q = parent(q) {
		if p.bad[q] {
			return true
		}
	}
	return false
}

// present reports whether the key path is in the file with a non-null
// value.
func (p *parser) present(path string) bool {
	l, ok := p.locs[path]
	return ok && !isNull(l.val)
}

func join(path, key string) string {
	if path == "" {
		return key
	}
	return path + "." + key
}

func deref(n *yaml.Node) *yaml.Node {
	for n != nil && n.Kind == yaml.AliasNode && n.Alias != nil {
		n = n.Alias
	}
	return n
}

func isNull(n *yaml.Node) bool {
	return n == nil || n.Kind == 0 || (n.Kind == yaml.ScalarNode && n.ShortTag() == "!!null")
}

// describe names what a node holds, for messages.
func describe(n *yaml.Node) string {
	switch n.Kind {
	case yaml.MappingNode:
		return "a mapping"
	case yaml.SequenceNode:
		return "a list"
	case yaml.ScalarNode:
		if n.ShortTag() == "!!str" {
			return fmt.Sprintf("text %q", n.Value)
		}
		return n.Value
	}
	return "an empty value"
}

// field is one YAML key of a struct.
type field struct {
	name string
	typ  reflect.Type
}

// fields lists a struct type's YAML keys in declaration order.
func fields(t reflect.Type) []field {
	var out []field
	for i := 0; i < t.NumField(); i++ {
		f := t.Field(i)
		if !f.IsExported() {
			continue
		}
		tag := f.Tag.Get("yaml")
		name, _, _ := strings.Cut(tag, ",")
		if name == "-" {
			continue
		}
		if name == "" {
			name = strings.ToLower(f.Name)
		}
		out = append(out, field{name, f.Type})
	}
	return out
}

func keys(t reflect.Type) []string {
	var out []string
	for _, f := range fields(t) {
		out = append(out, f.name)
	}
	return out
}

// walk checks a node against the Go type it will be decoded into: unknown
// and duplicate keys, and values of the wrong kind or not finite. It
// records the position of every key path it meets.
func (p *parser) walk(n *yaml.Node, t reflect.Type, path string) {
	n = deref(n)
	if isNull(n) {
		return
	}
	switch t.Kind() {
	case reflect.Pointer:
		p.walk(n, t.Elem(), path)
	case reflect.Struct:
		fields := fields(t)
		keys := keys(t)
		if n.Kind != yaml.MappingNode {
			p.problemAt(n, path, "must be a mapping with keys %s; got %s", strings.Join(keys, ", "), describe(n))
			return
		}
		p.walkMapping(n, path, func(k, v *yaml.Node, kp string) {
			for _, f := range fields {
				if f.name == k.Value {
					p.walk(v, f.typ, kp)
					return
				}
			}
			p.problemAt(k, kp, "unknown key; valid keys here: %s", strings.Join(keys, ", "))
		})
	case reflect.Map:
		if n.Kind != yaml.MappingNode {
			p.problemAt(n, path, "must be a mapping of metric names to {min, max}; got %s", describe(n))
			return
		}
		p.walkMapping(n, path, func(k, v *yaml.Node, kp string) { p.walk(v, t.Elem(), kp) })
	case reflect.Slice:
		if n.Kind != yaml.SequenceNode && t.Elem().Kind() == reflect.Struct {
			p.problemAt(n, path, "must be a list of mappings with keys %s; got %s", strings.Join(keys(t.Elem()), ", "), describe(n))
			return
		}
		if n.Kind != yaml.SequenceNode {
			if t.Elem().Kind() == reflect.String {
				p.problemAt(n, path, "must be a list of text such as [\"*.csv\"]; got %s", describe(n))
			} else {
				p.problemAt(n, path, "must be a list of numbers such as [1, 2]; got %s", describe(n))
			}
			return
		}
		for i, e := range n.Content {
			ep := fmt.Sprintf("%s[%d]", path, i)
			p.locs[ep] = loc{val: e}
			p.walk(e, t.Elem(), ep)
			if p.bad[ep] {
				p.bad[path] = true
				p.drop[n] = true
			}
		}
	case reflect.Float64:
		var f float64
		if n.Kind != yaml.ScalarNode || n.Decode(&f) != nil {
			p.problemAt(n, path, "must be a number, got %s", describe(n))
			return
		}
		if math.IsNaN(f) || math.IsInf(f, 0) {
			p.problemAt(n, path, "must be a finite number, got %s", n.Value)
		}
	case reflect.Int:
		var i int
		if n.Kind != yaml.ScalarNode || n.Decode(&i) != nil {
			p.problemAt(n, path, "must be a whole number, got %s", describe(n))
		}
	case reflect.String:
		if n.Kind != yaml.ScalarNode {
			p.problemAt(n, path, "must be text, got %s", describe(n))
		}
	case reflect.Bool:
		var b bool
		if n.Kind != yaml.ScalarNode || n.Decode(&b) != nil {
			p.problemAt(n, path, "must be true or false, got %s", describe(n))
		}
	default:
		p.problemAt(n, path, "cannot be read (unsupported type %s)", t)
	}
}

// walkMapping visits the keys of a mapping node, reporting keys that are
// not plain names and keys given twice. Keys merged in with YAML's "<<" are
// visited after the mapping's own keys, which override them.
func (p *parser) walkMapping(n *yaml.Node, path string, visit func(k, v *yaml.Node, kp string)) {
	seen := map[string]*yaml.Node{}
	var merged []*yaml.Node
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := deref(n.Content[i]), n.Content[i+1]
		if k.Kind == yaml.ScalarNode && k.ShortTag() == "!!merge" {
			v = deref(v)
			switch v.Kind {
			case yaml.MappingNode:
				merged = append(merged, v)
			case yaml.SequenceNode:
				for _, e := range v.Content {
					if e = deref(e); e.Kind == yaml.MappingNode {
						merged = append(merged, e)
					}
				}
			}
			continue
		}
		if k.Kind != yaml.ScalarNode {
			p.problemAt(k, path, "a key must be a plain name, got %s", describe(k))
			continue
		}
		kp := join(path, k.Value)
		if first, dup := seen[k.Value]; dup {
			p.problemAt(k, kp, "key given twice (first at line %d)", first.Line)
			continue
		}
		seen[k.Value] = k
		p.locs[kp] = loc{key: k, val: v}
		visit(k, v, kp)
	}
	for _, m := range merged {
		for i := 0; i+1 < len(m.Content); i += 2 {
			k, v := deref(m.Content[i]), m.Content[i+1]
			if k.Kind != yaml.ScalarNode || seen[k.Value] != nil {
				continue
			}
			kp := join(path, k.Value)
			seen[k.Value] = k
			p.locs[kp] = loc{key: k, val: v}
			visit(k, v, kp)
		}
	}
}
