package spec

import (
	"fmt"
	"maps"
	"strings"

	"github.com/stepgate/stepgate/metrics"
)

// Axis is one axis of a unit under test that logs several: its own command,
// response and effort columns (the time column, signals.time, is shared)
// and, optionally, its own limits.
type Axis struct {
	// Name identifies the axis in the reports, e.g. "X" or "lift".
	Name    string      `yaml:"name"`
	Signals AxisSignals `yaml:"signals"`
	// Limits replace the spec's top-level limits for this axis; when the
	// axis gives none, the top-level limits apply.
	Limits map[metrics.Name]Limit `yaml:"limits"`
}

// AxisSignals names an axis's log columns.
type AxisSignals struct {
	Command  string `yaml:"command"`
	Response string `yaml:"response"`
	Effort   string `yaml:"effort"` // optional
}

// MaxAxes is the most axes a spec may declare.
const MaxAxes = 16

// AxisNames returns the names of the spec's axes in spec order, or nil for
// a single-axis spec (no axes section).
func (s *Spec) AxisNames() []string {
	var out []string
	for _, a := range s.Axes {
		out = append(out, a.Name)
	}
	return out
}

// ForAxes returns one spec per axis, in spec order, each a copy of s that
// reads and judges that axis alone: its command, response and effort
// columns under signals, its limits (or the top-level ones) under limits,
// and no axes. A single-axis spec returns itself, alone. The copies share
// the model and the report information with s.
func (s *Spec) ForAxes() []*Spec {
	if len(s.Axes) == 0 {
		return []*Spec{s}
	}
	out := make([]*Spec, len(s.Axes))
	for i, a := range s.Axes {
		c := *s
		c.Axes = nil
		c.Signals = Signals{Time: s.Signals.Time, Command: a.Signals.Command, Response: a.Signals.Response, Effort: a.Signals.Effort}
		if len(a.Limits) > 0 {
			c.Limits = maps.Clone(a.Limits)
		}
		out[i] = &c
	}
	return out
}

// validateAxes checks the axes section: named, distinct axes with their
// own command and response columns, no column read twice, and limits on
// every axis (its own or the top-level ones). With axes, the top-level
// signals give the time column only.
func (p *parser) validateAxes() {
	s := p.spec
	if p.skipTree("axes") {
		return
	}
	if len(s.Axes) > MaxAxes {
		p.problem("axes", valNode, "at most %d axes, got %d", MaxAxes, len(s.Axes))
	}
	for _, k := range []string{"command", "response", "effort"} {
		if p.present("signals." + k) {
			p.problem("signals."+k, keyNode, "with axes, give each axis its %s column under axes[i].signals; signals holds the shared time column only", k)
		}
	}
	cols := map[string]string{}
	if s.Signals.Time != "" {
		cols[s.Signals.Time] = "signals.time"
	}
	names := map[string]string{}
	for i, a := range s.Axes {
		path := fmt.Sprintf("axes[%d]", i)
		p.requireText(path+".name", a.Name, "the axis's name, printed in the reports")
		if n := strings.TrimSpace(a.Name); n != "" && !p.skip(path+".name") {
			if first, dup := names[n]; dup {
				p.problem(path+".name", valNode, "axis %q is named twice (first at %s)", n, first)
			}
			names[n] = path
		}
		p.requireText(path+".signals.command", a.Signals.Command, "the log column holding this axis's commanded position")
		p.requireText(path+".signals.response", a.Signals.Response, "the log column holding this axis's measured position")
		if p.present(path+".signals.effort") && strings.TrimSpace(a.Signals.Effort) == "" && !p.skip(path+".signals.effort") {
			p.problem(path+".signals.effort", valNode, "must not be empty; leave the key out when the logs have no effort column for this axis")
		}
		for _, c := range []struct{ key, val string }{{"command", a.Signals.Command}, {"response", a.Signals.Response}, {"effort", a.Signals.Effort}} {
			key := path + ".signals." + c.key
			if c.val == "" || p.skip(key) {
				continue
			}
			if first, dup := cols[c.val]; dup {
				p.problem(key, valNode, "column %q is already read as %s", c.val, first)
				continue
			}
			cols[c.val] = key
		}
		if len(a.Limits) > 0 {
			p.checkLimits(path+".limits", a.Limits)
		} else if len(s.Limits) == 0 && !p.skipTree(path) {
			p.problem(path, keyNode, "axis %q has no limits and the spec gives no top-level limits; give limits here or under limits", a.Name)
		}
	}
}
