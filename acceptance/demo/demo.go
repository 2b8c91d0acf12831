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
	"runtime"
	"strconv"
	"sync"
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

// Options size the generated line.
type Options struct {
	Units    int     // number of units (logs)
	Duration float64 // seconds logged per unit; 0 means 3.5 (two steps)
}

// DefaultDuration is the record length of a demo log: a hold, the out step
// and the back step.
const DefaultDuration = 3.5

// Write writes the demo spec to dir/spec.yaml and one log per unit to
// dir/logs, and returns the spec path and the logs directory. Logs are
// written concurrently, one worker per core; their content does not depend
// on the order.
func Write(dir string, o Options) (specPath, logDir string, err error) {
	if o.Duration == 0 {
		o.Duration = DefaultDuration
	}
	if o.Duration < 2 || o.Duration > 600 {
		return "", "", fmt.Errorf("demo: duration %g s: want 2 to 600 s", o.Duration)
	}
	logDir = filepath.Join(dir, "logs")
	if err := os.MkdirAll(logDir, 0o755); err != nil {
		return "", "", fmt.Errorf("demo: %w", err)
	}
	specPath = filepath.Join(dir, "spec.yaml")
	if err := os.WriteFile(specPath, []byte(Spec), 0o644); err != nil {
		return "", "", fmt.Errorf("demo: %w", err)
	}
	units := Units(o.Units)
	jobs := make(chan int)
	errs := make([]error, len(units))
	var wg sync.WaitGroup
	for w := 0; w < runtime.NumCPU(); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range jobs {
				u := units[i]
				errs[i] = writeLog(filepath.Join(logDir, u.Serial+".csv"), u, o.Duration)
			}
		}()
	}
	for i := range units {
		jobs <- i
	}
	close(jobs)
	wg.Wait()
	for _, e := range errs {
		if e != nil {
			return "", "", e
		}
	}
	return specPath, logDir, nil
}

// command is the test plan: hold at 0, then a move every moveTime seconds
// from hold on, alternating between stroke and 0, as long as the move still
// has moveTime to settle before the record ends.
func command(t, duration float64) float64 {
	if t < hold {
		return 0
	}
	k := int((t - hold) / moveTime)
	last := int((duration-hold)/moveTime+1e-9) - 1 // index of the last move
	if k > last {
		k = last
	}
	if k%2 == 0 {
		return stroke
	}
	return 0
}

// Simulate runs unit u through the demo's step test (hold, then out and back
// steps every moveTime seconds, see command) for duration seconds and returns the logged
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
		r := command(tk, duration)
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
