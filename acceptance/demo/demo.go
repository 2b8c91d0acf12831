// Package demo owns stepgate's invented demonstration scenario: a line
// building 24 V ball-screw linear actuators that drive ventilation flaps
// (the "VD-25 vent drive", 100 mm stroke), tested end of line under a
// proportional position loop. It writes a spec and a set of step-test logs
// generated deterministically from a seeded rig simulation with unit-to-unit
// spread in plant gain, damping, static friction and loop delay, encoder
// quantisation and a little noise, so that most units pass and some fail for
// different reasons, plus one truncated log.
//
// Everything here is invented demo data; none of it is reference data for
// tests of the measuring code.
package demo

import (
	"bufio"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"time"
)

// Rig sampling and scenario constants.
const (
	logRate     = 1000.0 // Hz
	simSteps    = 10     // simulation sub-steps per log sample
	encoderStep = 0.01   // mm per encoder count
	hold        = 0.5    // s held before each move
	moveTime    = 1.5    // s logged after each move
	stroke      = 25.0   // mm out-step size
	effortLimit = 100.0  // % of rated drive effort
	kp          = 4.5    // %/mm, the gain under test
)

// Unit is one simulated actuator's physical parameters.
type Unit struct {
	Serial   string
	K        float64 // plant gain, (mm/s²) per % effort
	A        float64 // viscous pole, 1/s
	Friction float64 // Coulomb friction, % effort
	Delay    float64 // loop delay, s
	Noise    float64 // encoder read noise, counts (standard deviation)
	Started  time.Time
	Truncate bool // write a log cut off mid-line, as a crashed rig leaves it
}

// Units returns the n units of the demo scenario, deterministically.
func Units(n int) []Unit {
	rng := rand.New(rand.NewPCG(2026, 25))
	start := time.Date(2026, 11, 30, 6, 0, 0, 0, time.UTC)
	us := make([]Unit, n)
	for i := range us {
		u := Unit{
			Serial:   fmt.Sprintf("VD25-%06d", 261100+i+1),
			K:        48.4 * (1 + 0.06*rng.NormFloat64()),
			A:        19.8 * (1 + 0.05*rng.NormFloat64()),
			Friction: 0.05 + 0.08*rng.Float64(),
			Delay:    0.003 + 0.003*rng.Float64(),
			Noise:    0.3,
			Started:  start.Add(time.Duration(i) * 7 * time.Minute),
		}
		// A few units with specific defects, spread through the batch.
		switch i % 13 {
		case 4: // light damping: a worn or missing damping element
			u.A *= 0.62
		case 8: // sticky screw: high static friction
			u.Friction = 0.9 + 0.3*rng.Float64()
		case 11: // slow drive: weak motor and extra drag
			u.K *= 0.55
			u.A *= 1.9
		}
		us[i] = u
	}
	if n > 5 {
		us[n-3].Truncate = true
	}
	return us
}

// Write writes the demo spec to dir/spec.yaml and n logs to dir/logs, and
// returns the spec path and the logs directory.
func Write(dir string, n int) (specPath, logDir string, err error) {
	logDir = filepath.Join(dir, "logs")
	if err := os.MkdirAll(logDir, 0o755); err != nil {
		return "", "", fmt.Errorf("demo: %w", err)
	}
	specPath = filepath.Join(dir, "spec.yaml")
	if err := os.WriteFile(specPath, []byte(Spec), 0o644); err != nil {
		return "", "", fmt.Errorf("demo: %w", err)
	}
	for _, u := range Units(n) {
		p := filepath.Join(logDir, u.Serial+".csv")
		if err := writeLog(p, u, 3.5); err != nil {
			return "", "", err
		}
	}
	return specPath, logDir, nil
}

// Simulate runs unit u through the demo's step test (hold, out step to
// stroke, hold, back step to 0) for duration seconds and returns the logged
// time, command, position (quantised) and drive effort.
func Simulate(u Unit, duration float64) (t, cmd, pos, eff []float64) {
	rng := rand.New(rand.NewPCG(uint64(len(u.Serial)), hashString(u.Serial)))
	n := int(math.Round(duration*logRate)) + 1
	dt := 1 / (logRate * simSteps)
	delaySamples := int(math.Round(u.Delay * logRate * simSteps))
	queue := make([]float64, delaySamples+1) // effort in flight to the drive
	x, v := 0.0, 0.0
	u0 := 0.0
	qi := 0
	for k := 0; k < n; k++ {
		tk := float64(k) / logRate
		r := 0.0
		if tk >= hold && tk < hold+moveTime {
			r = stroke
		}
		meas := math.Round((x+u.Noise*encoderStep*rng.NormFloat64())/encoderStep) * encoderStep
		// The controller samples at the log rate and computes its output.
		out := kp * (r - meas)
		out = math.Max(-effortLimit, math.Min(effortLimit, out))
		t = append(t, tk)
		cmd = append(cmd, r)
		pos = append(pos, meas)
		eff = append(eff, out)
		for s := 0; s < simSteps; s++ {
			// The output reaches the drive after the loop delay.
			queue[qi] = out
			qi = (qi + 1) % len(queue)
			u0 = queue[qi]
			// Coulomb friction with stiction: the screw stays put while the
			// drive effort is below the friction level.
			acc := -u.A*v + u.K*u0
			if v == 0 && math.Abs(u0) <= u.Friction {
				acc = 0
			} else {
				f := u.K * u.Friction * sign(v, u0)
				acc -= f
			}
			vNew := v + acc*dt
			if v != 0 && vNew*v < 0 { // friction stops the motion
				vNew = 0
			}
			v = vNew
			x += v * dt
		}
	}
	return t, cmd, pos, eff
}

func sign(v, u float64) float64 {
	if v > 0 || (v == 0 && u > 0) {
		return 1
	}
	if v < 0 || (v == 0 && u < 0) {
		return -1
	}
	return 0
}

func hashString(s string) uint64 {
	var h uint64 = 1469598103934665603
	for i := 0; i < len(s); i++ {
		h ^= uint64(s[i])
		h *= 1099511628211
	}
	return h
}

func writeLog(path string, u Unit, duration float64) error {
	f, err := os.Create(path)
	if err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	w := bufio.NewWriter(f)
	fmt.Fprintf(w, "# serial: %s\n# product: VD-25 vent drive\n# station: EOL-2\n# operator: demo\n# started_at: %s\n", u.Serial, u.Started.Format(time.RFC3339))
	fmt.Fprintln(w, "t,target,position,drive")
	t, c, p, e := Simulate(u, duration)
	n := len(t)
	if u.Truncate {
		n = len(t) * 2 / 5
	}
	buf := make([]byte, 0, 64)
	for i := 0; i < n; i++ {
		buf = buf[:0]
		buf = strconv.AppendFloat(buf, t[i], 'f', 3, 64)
		buf = append(buf, ',')
		buf = appendFixed2(buf, c[i])
		buf = append(buf, ',')
		buf = appendFixed2(buf, p[i])
		buf = append(buf, ',')
		buf = appendFixed2(buf, e[i])
		buf = append(buf, '\n')
		w.Write(buf)
	}
	if u.Truncate { // the rig crashed while writing a row
		fmt.Fprintf(w, "%.3f,%.2f,2", t[n], c[n])
	}
	if err := w.Flush(); err != nil {
		f.Close()
		return fmt.Errorf("demo: writing %s: %w", path, err)
	}
	if err := f.Close(); err != nil {
		return fmt.Errorf("demo: writing %s: %w", path, err)
	}
	return nil
}

// appendFixed2 writes v with two decimals, without a "-0.00".
func appendFixed2(buf []byte, v float64) []byte {
	v = math.Round(v*100) / 100
	if v == 0 {
		v = 0
	}
	return strconv.AppendFloat(buf, v, 'f', 2, 64)
}
