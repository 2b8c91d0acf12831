package batch_test

import (
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/acceptance/batch"
	"github.com/stepgate/stepgate/acceptance/spec"
)

// twoAxisSpec judges axis X by the top-level limit (overshoot ≤ 5 %) and
// axis lift by its own (overshoot ≤ 12 %).
const twoAxisSpec = `spec_id: AX-2
revision: A
signals:
  time: t
steps:
  min_change: 0.5
limits:
  overshoot_pct: {max: 5}
axes:
  - name: X
    signals: {command: x_cmd, response: x_pos}
  - name: lift
    signals: {command: z_cmd, response: z_pos}
    limits:
      overshoot_pct: {max: 12}
`

// stepResponse is the unit-step response of the second-order loop,
// 1 − e^(−σt)(cos ωd t + (σ/ωd) sin ωd t) (K. Ogata, Modern Control
// Engineering, 5th ed., §5-3), whose overshoot is exp(−πζ/√(1 − ζ²)):
// 9.48 % for ζ = 0.6, 1.52 % for ζ = 0.8 (references.md §2).
func stepResponse(zeta, wn, t float64) float64 {
	if t < 0 {
		return 0
	}
	s, wd := zeta*wn, wn*math.Sqrt(1-zeta*zeta)
	return 1 - math.Exp(-s*t)*(math.Cos(wd*t)+s/wd*math.Sin(wd*t))
}

// writeTwoAxisLog writes a log of a 10 mm step on X (damping zx) and a
// 5 mm step on lift (damping zz) at 1 kHz; without lift, its columns are
// left out.
func writeTwoAxisLog(t *testing.T, dir, serial string, zx, zz float64, lift bool) string {
	var b strings.Builder
	fmt.Fprintf(&b, "# serial: %s\n", serial)
	b.WriteString("t,x_cmd,x_pos")
	if lift {
		b.WriteString(",z_cmd,z_pos")
	}
	b.WriteString("\n")
	for i := range 1500 {
		tm := float64(i) / 1000
		cmd := 0.0
		if tm >= 0.2 {
			cmd = 1
		}
		fmt.Fprintf(&b, "%.3f,%g,%.6f", tm, 10*cmd, 10*stepResponse(zx, 30, tm-0.2))
		if lift {
			fmt.Fprintf(&b, ",%g,%.6f", 5*cmd, 5*stepResponse(zz, 40, tm-0.2))
		}
		b.WriteString("\n")
	}
	path := filepath.Join(dir, serial+".csv")
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// TestSeveralAxes runs a batch under a two-axis spec: each axis is read
// from its own columns and judged by its own limits, every step names its
// axis, and a unit passes only when every axis passes.
func TestSeveralAxes(t *testing.T) {
	dir := t.TempDir()
	sp, err := spec.Parse([]byte(twoAxisSpec), "axes.yaml")
	if err != nil {
		t.Fatal(err)
	}
	files := []string{
		writeTwoAxisLog(t, dir, "A-1", 0.8, 0.6, true),  // X 1.5 % ≤ 5, lift 9.5 % ≤ 12: pass
		writeTwoAxisLog(t, dir, "A-2", 0.6, 0.6, true),  // X 9.5 % > 5: fail
		writeTwoAxisLog(t, dir, "A-3", 0.8, 0.8, false), // no lift columns: invalid
	}
	b, _, err := batch.Run(context.Background(), sp, files, batch.Options{ReportDate: "2026-12-01", Traces: batch.KeepNoTraces})
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]struct {
		unit acceptance.Verdict
		axes [2]acceptance.Verdict
	}{
		"A-1": {acceptance.Pass, [2]acceptance.Verdict{acceptance.Pass, acceptance.Pass}},
		"A-2": {acceptance.Fail, [2]acceptance.Verdict{acceptance.Fail, acceptance.Pass}},
		"A-3": {acceptance.Invalid, [2]acceptance.Verdict{acceptance.Pass, acceptance.Invalid}},
	}
	if len(b.Units) != 3 {
		t.Fatalf("%d units, want 3", len(b.Units))
	}
	for _, u := range b.Units {
		w := want[u.Unit]
		if u.Verdict != w.unit || len(u.Axes) != 2 || u.Axes[0].Name != "X" || u.Axes[1].Name != "lift" {
			t.Errorf("%s: %s with axes %+v, want %s", u.Unit, u.Verdict, u.Axes, w.unit)
			continue
		}
		for i, a := range u.Axes {
			if a.Verdict != w.axes[i] {
				t.Errorf("%s axis %s: %s %q, want %s", u.Unit, a.Name, a.Verdict, a.Reasons, w.axes[i])
			}
			for _, r := range a.Reasons {
				if !strings.HasPrefix(r.Text, "axis "+a.Name+": ") {
					t.Errorf("%s axis %s reason %q does not name its axis", u.Unit, a.Name, r.Text)
				}
			}
		}
		for _, s := range u.Steps {
			if s.Axis != "X" && s.Axis != "lift" {
				t.Errorf("%s step %d has axis %q", u.Unit, s.Index, s.Axis)
			}
			size := map[string]float64{"X": 10, "lift": 5}[s.Axis]
			if s.To-s.From != size {
				t.Errorf("%s axis %s step of %v, want %v: read from the wrong columns", u.Unit, s.Axis, s.To-s.From, size)
			}
		}
	}
	if s := b.Summary; s.Pass != 1 || s.Fail != 1 || s.Invalid != 1 {
		t.Errorf("summary %+v, want one of each", s)
	}
}
