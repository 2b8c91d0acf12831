package spec_test

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/stepgate/stepgate/acceptance/model"
	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/metrics"
)

// TestLoadFiles loads the example specs and checks what they say, the
// defaults, and the digest. SHA-256 is FIPS 180-4; the digest is recomputed
// here from the file bytes.
func TestLoadFiles(t *testing.T) {
	path := filepath.Join("..", "..", "testdata", "specs", "vd25.yaml")
	s, err := spec.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	sum := sha256.Sum256(data)
	if s.SHA256 != hex.EncodeToString(sum[:]) || len(s.SHA256) != 64 {
		t.Errorf("SHA256 = %q, want the file digest", s.SHA256)
	}
	if s.Source != path {
		t.Errorf("Source = %q, want %q", s.Source, path)
	}
	if s.SpecID != "VD25-EOL" || s.Revision != "B" || s.Signals != (spec.Signals{Time: "t", Command: "target", Response: "position", Effort: "drive"}) {
		t.Errorf("identity or signals wrong: %+v", s)
	}
	if s.Steps.MinChange != 0.5 || s.ResponseUnit != "mm" {
		t.Errorf("steps or unit wrong: %+v %q", s.Steps, s.ResponseUnit)
	}
	wantRef := &model.ReferenceTest{Gain: 1, StaticGain: 1, Damping: 0.45, NaturalFrequency: 22}
	if s.Model == nil || !reflect.DeepEqual(s.Model.ReferenceTest, wantRef) || s.Model.Plant != nil {
		t.Fatalf("model = %+v", s.Model)
	}
	if s.Model.Controller.Kp != 0.55 || s.Model.Loop == nil || *s.Model.Loop != (model.Loop{SamplePeriod: 0.001, Delay: 0.002}) ||
		s.Model.Actuator == nil || s.Model.Actuator.EffortLimit != 100 {
		t.Errorf("controller, loop or actuator wrong: %+v", s.Model)
	}
	if got, want := s.LimitNames(), []metrics.Name{"rise_time_s", "overshoot_pct", "settling_time_s", "steady_state_error"}; !reflect.DeepEqual(got, want) {
		t.Errorf("LimitNames = %v, want %v (metrics.Names order)", got, want)
	}
	if l := s.Limits["overshoot_pct"]; l.Min != nil || l.Max == nil || *l.Max != 8 {
		t.Errorf("overshoot limit = %+v", l)
	}
	// Defaults the file leaves out.
	if s.Metrics.DeadTimeLevelPct != 2 || s.Metrics.FinalWindowPct != 20 || s.Log.Delimiter != "auto" {
		t.Errorf("defaults not applied: %+v %+v", s.Metrics, s.Log)
	}

	// The second example sets a logo that exists beside it.
	path = filepath.Join("..", "..", "testdata", "specs", "plant_loop.yaml")
	s, err = spec.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	if s.Model == nil || s.Model.Plant == nil || !reflect.DeepEqual(s.Model.Plant.Denominator, []float64{1, 20, 0}) {
		t.Errorf("plant = %+v", s.Model)
	}
	if got, want := s.LogoPath(), filepath.Join("..", "..", "testdata", "specs", "logo.png"); got != want {
		t.Errorf("LogoPath = %q, want %q", got, want)
	}
	if s.TimeUnit != "ms" || !s.Log.DecimalComma || s.Log.Delimiter != "semicolon" || s.Revision != "3" {
		t.Errorf("format wrong: %q %+v %q", s.TimeUnit, s.Log, s.Revision)
	}
}

// TestLoadLogo checks that Load resolves the logo against the spec's
// folder and reports a missing one together with the other problems.
func TestLoadLogo(t *testing.T) {
	dir := t.TempDir()
	write := func(name, text string) string {
		p := filepath.Join(dir, name)
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	write("art/logo.png", "\x89PNG\r\n\x1a\n")
	cases := []struct {
		name, spec string
		want       string // "" for success, else the whole error text
	}{
		{"present", "report: {logo: art/logo.png}\n", ""},
		{"missing", "report: {logo: art/missing.png}\n",
			"s.yaml:11:16: report.logo: cannot use logo " + filepath.Join(dir, "art", "missing.png") + " (paths are relative to the spec file): no such file"},
		{"folder", "report: {logo: art.png}\n",
			"s.yaml:11:16: report.logo: " + filepath.Join(dir, "art.png") + " is a folder, not an image file"},
		{"missing with other problems", "report: {logo: art/missing.png}\ntime_unit: min\n",
			"s.yaml:11:16: report.logo: cannot use logo " + filepath.Join(dir, "art", "missing.png") + " (paths are relative to the spec file): no such file\n" +
				`s.yaml:12:12: time_unit: must be one of s, ms, us; got "min"`},
	}
	if err := os.MkdirAll(filepath.Join(dir, "art.png"), 0o755); err != nil {
		t.Fatal(err)
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p := write("s.yaml", baseSpec+c.spec)
			s, err := spec.Load(p)
			if c.want == "" {
				if err != nil {
					t.Fatal(err)
				}
				if s.LogoPath() != filepath.Join(dir, "art", "logo.png") {
					t.Errorf("LogoPath = %q", s.LogoPath())
				}
				return
			}
			if err == nil {
				t.Fatal("want an error")
			}
			if got := strings.ReplaceAll(err.Error(), p, "s.yaml"); got != c.want {
				t.Errorf("error:\n%s\nwant:\n%s", got, c.want)
			}
		})
	}

	_, err := spec.Load(filepath.Join(dir, "nope.yaml"))
	if !errors.Is(err, fs.ErrNotExist) || !strings.Contains(err.Error(), "nope.yaml") {
		t.Errorf("missing file: err = %v, want one naming the file and wrapping fs.ErrNotExist", err)
	}
}

// TestDefaultsAndOptions checks the defaults and their conversion to
// fractions (1 % = 0.01; BIPM SI Brochure, 9th ed., 2019, §5.4.7, from
// memory). The default levels: 10 % and 90 % reference levels (IEEE Std
// 181-2011, references.md §1); a 2 % settling band (K. Ogata, Modern Control
// Engineering, 5th ed., §5-3); the 2 % dead-time level and 20 % final window
// are stepgate's (common practice, no source).
func TestDefaultsAndOptions(t *testing.T) {
	cases := []struct {
		name, extra string
		want        metrics.Options
	}{
		{"defaults", "", metrics.Options{RiseLow: 0.10, RiseHigh: 0.90, Band: 0.02, DeadTimeLevel: 0.02, FinalWindow: 0.20, MinSamples: 10, SteadyTime: 0.05}},
		{"set", "metrics: {rise_levels_pct: [5, 95], settling_band_pct: 5, dead_time_level_pct: 1, final_window_pct: 100}\n",
			metrics.Options{RiseLow: 0.05, RiseHigh: 0.95, Band: 0.05, DeadTimeLevel: 0.01, FinalWindow: 1, MinSamples: 10, SteadyTime: 0.05}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			s, err := spec.Parse([]byte(baseSpec+c.extra), "t.yaml")
			if err != nil {
				t.Fatal(err)
			}
			o := s.Options()
			for _, f := range []struct {
				name      string
				got, want float64
			}{
				{"RiseLow", o.RiseLow, c.want.RiseLow}, {"RiseHigh", o.RiseHigh, c.want.RiseHigh},
				{"Band", o.Band, c.want.Band}, {"DeadTimeLevel", o.DeadTimeLevel, c.want.DeadTimeLevel},
				{"FinalWindow", o.FinalWindow, c.want.FinalWindow}, {"SteadyTime", o.SteadyTime, c.want.SteadyTime},
			} {
				if math.Abs(f.got-f.want) > 1e-15 {
					t.Errorf("%s = %v, want %v", f.name, f.got, f.want)
				}
			}
			if o.MinSamples != c.want.MinSamples {
				t.Errorf("MinSamples = %d, want %d", o.MinSamples, c.want.MinSamples)
			}
		})
	}
	s, err := spec.Parse([]byte(baseSpec), "t.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if s.TimeUnit != "s" || s.Log.Delimiter != "auto" || !reflect.DeepEqual(s.Metrics.RiseLevelsPct, []float64{10, 90}) ||
		s.Metrics.SettlingBandPct != 2 || s.Metrics.DeadTimeLevelPct != 2 || s.Metrics.FinalWindowPct != 20 || s.Model != nil {
		t.Errorf("defaults: %+v %+v %q", s.Metrics, s.Log, s.TimeUnit)
	}
}

// TestTimeScale checks the conversion of the time column to seconds: SI
// prefixes milli = 10⁻³ and micro = 10⁻⁶ (BIPM, The International System of
// Units, 9th ed., 2019, Table 7).
func TestTimeScale(t *testing.T) {
	cases := []struct {
		unit string
		want float64
	}{
		{"s", 1}, {"", 1}, {"ms", 1e-3}, {"us", 1e-6},
	}
	for _, c := range cases {
		s := &spec.Spec{TimeUnit: c.unit}
		if got := s.TimeScale(); got != c.want {
			t.Errorf("TimeScale(%q) = %v, want %v", c.unit, got, c.want)
		}
	}
	if got := (&spec.Spec{TimeUnit: "min"}).TimeScale(); !math.IsNaN(got) {
		t.Errorf("TimeScale(min) = %v, want NaN for a unit the spec format rejects", got)
	}
}

// TestLimitNames checks that limits come in report order, metrics.Names.
func TestLimitNames(t *testing.T) {
	v := 1.0
	s := &spec.Spec{Limits: map[metrics.Name]spec.Limit{
		"steady_state_error_pct": {Max: &v}, "step_size": {Min: &v}, "overshoot_pct": {Max: &v}, "dead_time_s": {Max: &v},
	}}
	want := []metrics.Name{"step_size", "dead_time_s", "overshoot_pct", "steady_state_error_pct"}
	for i := 0; i < 5; i++ { // map order must not leak
		if got := s.LimitNames(); !reflect.DeepEqual(got, want) {
			t.Fatalf("LimitNames = %v, want %v", got, want)
		}
	}
}
