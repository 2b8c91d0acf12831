//go:build ignore

// Command generate writes the bad-input corpus of testdata/bad: one small
// log per case, each derived from the good log good.csv, and the specs under
// specs/. Run it from the repository root with
//
//	go run testdata/bad/generate.go
//
// The good log is the unit-step response of the second-order closed loop
// 1/(s² + 2ζωn s + ωn²)·ωn² with ζ = 0.6 and ωn = 20 rad/s, which is K. Ogata,
// Modern Control Engineering, 5th ed., Example 5-1 (ζ = 0.6, ωn = 5 rad/s)
// with time compressed four times:
//
//	y(t) = 1 − e^(−σt)(cos ωd t + (σ/ωd) sin ωd t), σ = ζωn, ωd = ωn√(1 − ζ²)
//
// scaled by a 0 → 10 command step at t = 0.25 s and sampled every 5 ms to
// t = 1.495 s (references.md §2). The record runs 1.245 s past the step, so
// that the final window (its last 20 %, from 1 s after the step on) holds
// the final value to 1e-4 of the step. The bad cases change it in one way each;
// the cases are listed with their expected verdicts in README.md and in
// acceptance/badinput_test.go. Large, binary and file-system cases (UTF-16,
// gzip, binary garbage, a very long line, a very large file, link loops, an
// unreadable file, a named pipe) are made by the test at run time instead.
package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
)

// The good log's sampling and step.
const (
	dt    = 0.005 // s
	n     = 300   // samples, t = 0 … 1.495 s
	at    = 50    // index of the step instant, t = 0.25 s
	size  = 10.0  // command step
	zeta  = 0.6
	wn    = 20.0 // rad/s
	kp    = 2.0  // effort = kp·(command − position), for the effort column
	dir   = "testdata/bad"
	head  = "t,cmd,pos,effort"
	first = "# serial: %s\n# station: RIG-1\n# started_at: 2026-11-30T06:00:00Z\n"
)

// unit is the closed-form unit-step response at tau seconds after the step.
func unit(tau float64) float64 {
	if tau < 0 {
		return 0
	}
	s := zeta * wn
	wd := wn * math.Sqrt(1-zeta*zeta)
	return 1 - math.Exp(-s*tau)*(math.Cos(wd*tau)+s/wd*math.Sin(wd*tau))
}

// sample is one row of a log.
type sample struct{ t, cmd, pos, eff float64 }

// good returns the good log's samples.
func good() []sample {
	out := make([]sample, n)
	for i := range out {
		t := float64(i) * dt
		c := 0.0
		if i >= at {
			c = size
		}
		y := size * unit(t-float64(at)*dt)
		out[i] = sample{t, c, y, kp * (c - y)}
	}
	return out
}

// row formats a sample as the good log writes it.
func row(s sample) string {
	return fmt.Sprintf("%.3f,%g,%.4f,%.3f", s.t, s.cmd, s.pos, s.eff)
}

// rows formats samples, one line each, with a final newline.
func rows(ss []sample) string {
	var b strings.Builder
	for _, s := range ss {
		b.WriteString(row(s))
		b.WriteByte('\n')
	}
	return b.String()
}

// log is a complete log: metadata for serial, the header and the rows.
func log(serial string, ss []sample) string {
	return fmt.Sprintf(first, serial) + head + "\n" + rows(ss)
}

// edit returns the good rows with row i replaced by line.
func edit(i int, line string) string {
	lines := strings.Split(strings.TrimSuffix(rows(good()), "\n"), "\n")
	lines[i] = line
	return strings.Join(lines, "\n") + "\n"
}

// with returns the good samples with f applied to each (index, sample).
func with(f func(i int, s sample) sample) []sample {
	ss := good()
	for i := range ss {
		ss[i] = f(i, ss[i])
	}
	return ss
}

// withResponse recomputes position and effort with y(tau) for the samples
// from the step on.
func withResponse(y func(tau float64) float64) []sample {
	return with(func(i int, s sample) sample {
		if i >= at {
			s.pos = y(s.t - float64(at)*dt)
			s.eff = kp * (s.cmd - s.pos)
		}
		return s
	})
}

func main() {
	files := map[string]string{}
	put := func(name, text string) {
		if _, dup := files[name]; dup {
			panic("duplicate case " + name)
		}
		files[name] = text
	}
	g := good()
	put("good.csv", log("GOOD-0001", g))

	// The file as a whole.
	put("empty.csv", "")
	put("blank_lines.csv", "\n   \n\n")
	put("header_only.csv", head+"\n")
	put("comments_only.csv", "# serial: BAD-COMMENTS\n# station: RIG-1\n")
	put("no_header.csv", rows(g))
	put("single_sample.csv", log("BAD-SINGLE", g[:1]))
	put("zip_named_csv.csv", "PK\x03\x04\x14\x00\x00\x00\x08\x00stepgate.csv")
	put("pdf_named_csv.csv", "%PDF-1.4\n1 0 obj\n<< /Type /Catalog >>\nendobj\n")
	put("control_bytes.csv", "# serial: BAD-CONTROL\n"+"t,cmd,\x01pos,effort\n"+rows(g))

	// The header.
	put("missing_time.csv", fmt.Sprintf(first, "BAD-NOTIME")+"time,cmd,pos,effort\n"+rows(g))
	put("missing_command.csv", fmt.Sprintf(first, "BAD-NOCMD")+"t,target,pos,effort\n"+rows(g))
	put("missing_response.csv", fmt.Sprintf(first, "BAD-NOPOS")+"t,cmd,position,effort\n"+rows(g))
	put("duplicate_column.csv", fmt.Sprintf(first, "BAD-DUPCOL")+"t,cmd,pos,pos\n"+rows(g))
	put("wrong_delimiter.csv", fmt.Sprintf(first, "BAD-PIPE")+strings.ReplaceAll(head+"\n"+rows(g), ",", "|"))
	put("mixed_delimiters_header.csv", fmt.Sprintf(first, "BAD-MIXHEAD")+"t,cmd;pos,effort;\n"+rows(g))
	put("mixed_delimiters_rows.csv", fmt.Sprintf(first, "BAD-MIXROWS")+head+"\n"+edit(120, strings.ReplaceAll(row(g[120]), ",", ";")))
	put("decimal_comma.csv", fmt.Sprintf(first, "BAD-DECCOMMA")+strings.ReplaceAll(strings.ReplaceAll(head+"\n"+rows(g), ",", ";"), ".", ","))

	// The rows.
	put("text_in_number.csv", fmt.Sprintf(first, "BAD-TEXT")+head+"\n"+edit(80, "0.400,10,n/a,0"))
	put("nan.csv", fmt.Sprintf(first, "BAD-NAN")+head+"\n"+edit(80, "0.400,10,NaN,0"))
	put("plus_inf.csv", fmt.Sprintf(first, "BAD-INF")+head+"\n"+edit(80, "0.400,10,+Inf,0"))
	put("minus_inf.csv", fmt.Sprintf(first, "BAD-NEGINF")+head+"\n"+edit(80, "0.400,10,-Inf,0"))
	put("nan_effort.csv", fmt.Sprintf(first, "BAD-NANEFF")+head+"\n"+edit(80, "0.400,10,9.9000,NaN"))
	put("empty_cell.csv", fmt.Sprintf(first, "BAD-EMPTY")+head+"\n"+edit(80, "0.400,10,,0"))
	put("out_of_range.csv", fmt.Sprintf(first, "BAD-RANGE")+head+"\n"+edit(80, "0.400,10,1e999,0"))
	put("hex_number.csv", fmt.Sprintf(first, "BAD-HEX")+head+"\n"+edit(80, "0.400,0xA,9.9000,0"))
	put("date_in_time.csv", fmt.Sprintf(first, "BAD-DATE")+head+"\n"+edit(0, "2026-11-30T06:00:00.000,0,0.0000,0.000"))
	put("fewer_fields.csv", fmt.Sprintf(first, "BAD-FEWER")+head+"\n"+edit(100, "0.500,10,9.9000"))
	put("extra_fields.csv", fmt.Sprintf(first, "BAD-EXTRA")+head+"\n"+edit(100, row(g[100])+",1"))
	put("comment_in_data.csv", fmt.Sprintf(first, "BAD-COMMENT")+head+"\n"+edit(100, "# rig paused"))
	put("conflicting_metadata.csv", fmt.Sprintf(first, "BAD-META")+"# serial: BAD-META-2\n"+head+"\n"+rows(g))
	put("repeated_time.csv", fmt.Sprintf(first, "BAD-REPEAT")+head+"\n"+edit(101, strings.Replace(row(g[101]), "0.505", "0.500", 1)))
	put("decreasing_time.csv", fmt.Sprintf(first, "BAD-DECREASE")+head+"\n"+edit(101, strings.Replace(row(g[101]), "0.505", "0.495", 1)))
	full := log("BAD-TRUNC", g[:152])
	put("truncated_mid_line.csv", full[:len(full)-len(row(g[151]))-1+len("0.755,10,9.9")])
	put("truncated_mid_number.csv", strings.TrimSuffix(log("BAD-TRUNC2", g[:152]), fmt.Sprintf("%.3f\n", g[151].eff)))

	// Sampling.
	put("time_gap.csv", log("BAD-GAP", append(append([]sample{}, g[:61]...), g[111:]...)))
	jitter := make([]sample, 0, n)
	for i := 0; i < n; i++ {
		// Deterministic jitter of up to ±40 % of the period (a rig logging
		// from a non-real-time task); the command steps at the first sample
		// at or after 0.25 s and the response is computed at the sample's
		// own time.
		j := 0.4 * dt * math.Sin(float64(i)*12.9898)
		if i == 0 {
			j = 0
		}
		t := float64(i)*dt + j
		c := 0.0
		if i >= at {
			c = size
		}
		y := size * unit(t-(float64(at)*dt+0.4*dt*math.Sin(float64(at)*12.9898)))
		jitter = append(jitter, sample{t, c, y, kp * (c - y)})
	}
	put("irregular_sampling.csv", fmt.Sprintf(first, "BAD-JITTER")+head+"\n"+jitterRows(jitter))
	put("time_in_ms.csv", fmt.Sprintf(first, "BAD-MS")+head+"\n"+rows(with(func(i int, s sample) sample { s.t *= 1000; return s })))

	// Steps.
	put("no_step.csv", log("BAD-NOSTEP", with(func(i int, s sample) sample { return sample{s.t, 0, 0, 0} })))
	put("step_on_last_sample.csv", log("BAD-LASTSTEP", with(func(i int, s sample) sample {
		s.cmd, s.pos, s.eff = 0, 0, 0
		if i == n-1 {
			s.cmd, s.eff = size, kp*size
		}
		return s
	})))
	put("steps_too_close.csv", log("BAD-CLOSE", with(func(i int, s sample) sample {
		// Out at 0.25 s and back at 0.30 s: the first step lasts 10
		// samples, far too short to settle; the response is the
		// superposition of the two steps' responses.
		back := float64(at+10) * dt
		s.cmd = 0
		if i >= at && i < at+10 {
			s.cmd = size
		}
		s.pos = size*unit(s.t-float64(at)*dt) - size*unit(s.t-back)
		s.eff = kp * (s.cmd - s.pos)
		return s
	})))
	put("record_ends_early.csv", log("BAD-SHORT", g[:at+25]))

	// The response.
	put("never_moves.csv", log("BAD-STILL", withResponse(func(float64) float64 { return 0 })))
	put("wrong_direction.csv", log("BAD-REVERSE", withResponse(func(tau float64) float64 { return -size * unit(tau) })))
	put("stuck_at_rail.csv", log("BAD-RAIL", withResponse(func(tau float64) float64 { return math.Min(size*unit(tau), 6.5) })))
	put("rail_saturated.csv", log("BAD-SATURATED", with(func(i int, s sample) sample {
		s.pos = 100
		s.eff = kp * (s.cmd - s.pos)
		return s
	})))
	put("spike_at_peak.csv", log("BAD-SPIKEPEAK", with(func(i int, s sample) sample {
		if i == at+20 { // 0.1 s after the step, before the peak at 0.196 s
			s.pos = 16
		}
		return s
	})))
	put("spike_in_final_window.csv", log("BAD-SPIKEEND", with(func(i int, s sample) sample {
		if i == at+220 { // 1.1 s after the step, inside the final window
			s.pos -= 1
		}
		return s
	})))
	put("noisy.csv", log("BAD-NOISY", with(func(i int, s sample) sample {
		if i >= at {
			s.pos += 2 * math.Sin(float64(i)*78.233) // ±2 against a ±0.2 band
		}
		return s
	})))
	put("oscillating.csv", log("BAD-OSC", withResponse(func(tau float64) float64 {
		return size * (1 - math.Cos(wn*tau)) // undamped, ζ = 0
	})))

	// Good data in another dress: these pass.
	crlf := strings.ReplaceAll(log("BAD-CRLF", g), "\n", "\r\n")
	put("crlf_bom.csv", "\xef\xbb\xbf"+crlf)
	put("quoted_header.csv", fmt.Sprintf(first, "BAD-QUOTED")+`"t","cmd","pos","effort"`+"\n"+rows(g))
	put("bad_started_at.csv", strings.Replace(log("BAD-DATEMETA", g), "2026-11-30T06:00:00Z", "2026-13-45T06:00:00Z", 1))

	// The same serial in two files: one log filed twice (identical bytes).
	put("duplicate_serial_a.csv", log("DUP-0001", g))
	put("duplicate_serial_b.csv", log("DUP-0001", g))
	// A retest: a unit failed at 06:00, reworked and passed at 07:00.
	osc := withResponse(func(tau float64) float64 { return size * (1 - math.Cos(wn*tau)) })
	put("retest_1.csv", log("RETEST-0001", osc))
	put("retest_2.csv", strings.Replace(log("RETEST-0001", g), "T06:00:00Z", "T07:00:00Z", 1))
	// Two different logs claiming one serial and one start time.
	put("clash_a.csv", log("CLASH-0001", g))
	put("clash_b.csv", log("CLASH-0001", osc))

	for name, text := range files {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
	}
	for name, text := range specs {
		p := filepath.Join(dir, "specs", name)
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
	}
	fmt.Printf("%d logs, %d specs\n", len(files), len(specs))
}

// jitterRows formats irregularly sampled rows with the time to 0.1 ms.
func jitterRows(ss []sample) string {
	var b strings.Builder
	for _, s := range ss {
		fmt.Fprintf(&b, "%.4f,%g,%.4f,%.3f\n", s.t, s.cmd, s.pos, s.eff)
	}
	return b.String()
}

// corpusSpec is the spec every corpus log is judged with.
const corpusSpec = `# Spec for the bad-input corpus (testdata/bad). The good log is the
# second-order response of Ogata, Modern Control Engineering, 5th ed.,
# Example 5-1, with time compressed four times (zeta 0.6, wn 20 rad/s):
# overshoot 9.48 %, rise time (10-90 %) 0.0927 s, settling time (2 %)
# 0.297 s, no steady-state error, all within these limits.
spec_id: BAD-CORPUS
revision: "1"
title: Bad-input corpus
signals:
  time: t
  command: cmd
  response: pos
  effort: effort
response_unit: mm
steps:
  min_change: 0.5
limits:
  overshoot_pct: {max: 12}
  rise_time_s: {max: 0.15}
  settling_time_s: {max: 0.5}
  steady_state_error: {max: 0.1}
`

// modelPlant is the plant of the model specs: 48.4/(s² + 19.8 s), a
// position loop under proportional gain (the closed loop is
// s² + 19.8 s + 48.4 kp, references.md §4).
const modelPlant = "  plant: {numerator: [48.4], denominator: [1, 19.8, 0]}\n"

// specs are the spec files of the corpus.
var specs = map[string]string{
	"corpus.yaml": corpusSpec,
	// A plant with a pole at +5 under a gain too small to pull it back:
	// the closed loop 48.4/(s − 5) · 0.05 has its pole at 5 − 2.42 = 2.58
	// (references.md §4, unity feedback), unstable.
	"unstable_loop.yaml": corpusSpec + "model:\n  plant: {numerator: [48.4], denominator: [1, -5]}\n  controller: {kp: 0.05}\n",
	// Stable without delay (ζ = 19.8/(2·√(48.4·4.5)) = 0.67), but the phase
	// margin of 64° at the 9.85 rad/s crossover gives a delay margin of
	// about 0.11 s: a loop delay of 0.2 s makes the realised loop unstable.
	"delay_unstable.yaml": corpusSpec + "model:\n" + modelPlant + "  controller: {kp: 4.5}\n  loop: {sample_period_s: 0.002, delay_s: 0.2}\n",
	// The same loop with a short delay: stable, predicted.
	"delay_stable.yaml": corpusSpec + "model:\n" + modelPlant + "  controller: {kp: 4.5}\n  loop: {sample_period_s: 0.001, delay_s: 0.002}\n",
	// Rules the spec loader enforces, one file each.
	"min_above_max.yaml":         strings.Replace(corpusSpec, "settling_time_s: {max: 0.5}", "settling_time_s: {min: 0.6, max: 0.5}", 1),
	"band_zero.yaml":             corpusSpec + "metrics:\n  settling_band_pct: 0\n",
	"band_100.yaml":              corpusSpec + "metrics:\n  settling_band_pct: 100\n",
	"unknown_metric.yaml":        strings.Replace(corpusSpec, "overshoot_pct:", "overshoot:", 1),
	"improper_plant.yaml":        corpusSpec + "model:\n  plant: {numerator: [1, 0, 0], denominator: [1, 5]}\n  controller: {kp: 1}\n",
	"derivative_unfiltered.yaml": corpusSpec + "model:\n" + modelPlant + "  controller: {kp: 4.5, kd: 0.1}\n",
	"deadband_above_limit.yaml":  corpusSpec + "model:\n" + modelPlant + "  controller: {kp: 4.5}\n  actuator: {effort_limit: 10, deadband: 12}\n",
}
