// Command stepgate-perf measures stepgate's batch throughput and memory at
// production scale and prints the figures the README's Performance section
// quotes.
//
// For each batch size it generates the invented demo line (three steps at
// 1 kHz over 6 s per unit, about 18,000 rows per file), then times
//
//   - the floor: a bare read-and-parse of the same files with the same
//     reader and one worker per core, every numeric field parsed and nothing
//     else done (not even the SHA-256 of each file that the run records);
//   - the floor with the SHA-256 of every file added, which the reports
//     need (the report id hashes the inputs, and each unit records its
//     file's digest): the part of the run no report format can remove;
//   - the full run: `stepgate run` as a separate process, reports included,
//     its peak resident memory taken from the kernel's rusage, and the time
//     it spent before its first report (its --timing line), so that the
//     judging and the reports can be told apart.
//
// The page cache is warmed first, until the floor's time is steady; then
// floor and full run alternate -repeat times (3 by default) and the medians
// are reported, with the worst peak memory, since a shared machine's
// timings vary from run to run.
//
// It prints throughput (MB/s, units/s), the full run's share of the floor's
// throughput, the peak memory, and the growth of run time from the middle to
// the largest batch against the growth in samples.
//
// Usage:
//
//	go run ./cmd/stepgate-perf -sizes 1000,5000,20000 -dir /tmp/stepgate-perf
package main

import (
	"flag"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"sort"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"syscall"
	"time"

	"github.com/stepgate/stepgate/acceptance/demo"
	"github.com/stepgate/stepgate/acceptance/logs"
)

// options are the script's flags.
type options struct {
	sizes    string  // -sizes: comma-separated batch sizes
	dir      string  // -dir: working directory
	duration float64 // -duration-s: seconds logged per unit
	keep     bool    // -keep: keep the generated logs
	repeat   int     // -repeat: alternated measurements per size
}

func main() {
	var o options
	flag.StringVar(&o.sizes, "sizes", "1000,5000,20000", "comma-separated batch sizes (units)")
	flag.StringVar(&o.dir, "dir", filepath.Join(os.TempDir(), "stepgate-perf"), "working directory for generated logs and reports")
	flag.Float64Var(&o.duration, "duration-s", 6, "seconds logged per unit")
	flag.BoolVar(&o.keep, "keep", false, "keep the generated logs")
	flag.IntVar(&o.repeat, "repeat", 3, "measurements of the floor and the full run per size, alternated; the median is reported")
	flag.Parse()
	if o.repeat < 1 {
		fmt.Fprintln(os.Stderr, "stepgate-perf: -repeat must be at least 1")
		os.Exit(2)
	}
	if err := run(o); err != nil {
		fmt.Fprintln(os.Stderr, "stepgate-perf:", err)
		os.Exit(1)
	}
}

type result struct {
	units              int
	bytes              int64
	rows               int64
	floor, full        time.Duration
	digested           time.Duration // the floor with the SHA-256 of each file
	judged             time.Duration // the full run up to its first report
	peakRSS            int64         // bytes
	exitCode           int
	floorMBs, fullMBs  float64
	fullUnitsPerSecond float64
}

// run measures every batch size and prints the tables.
func run(o options) error {
	sizes, err := parseSizes(o.sizes)
	if err != nil {
		return err
	}
	if err := os.MkdirAll(o.dir, 0o755); err != nil {
		return err
	}
	bin, err := buildStepgate(o.dir)
	if err != nil {
		return err
	}
	fmt.Printf("machine: %d cores (GOMAXPROCS %d), %s/%s, %s\n", runtime.NumCPU(), runtime.GOMAXPROCS(0), runtime.GOOS, runtime.GOARCH, runtime.Version())
	var results []result
	for _, n := range sizes {
		r, err := measureSize(bin, o, n)
		if err != nil {
			return err
		}
		results = append(results, r)
	}
	printTables(results)
	return nil
}

// parseSizes reads the -sizes flag.
func parseSizes(flag string) ([]int, error) {
	var sizes []int
	for _, s := range strings.Split(flag, ",") {
		n, err := strconv.Atoi(strings.TrimSpace(s))
		if err != nil || n < 1 {
			return nil, fmt.Errorf("-sizes: %q is not a positive whole number", s)
		}
		sizes = append(sizes, n)
	}
	return sizes, nil
}

// buildStepgate builds the command into dir and returns its path.
func buildStepgate(dir string) (string, error) {
	bin := filepath.Join(dir, "stepgate")
	build := exec.Command("go", "build", "-o", bin, "./cmd/stepgate")
	build.Stdout, build.Stderr = os.Stderr, os.Stderr
	if err := build.Run(); err != nil {
		return "", fmt.Errorf("building stepgate: %w", err)
	}
	return bin, nil
}

// samples are the alternated measurements of one batch size.
type samples struct {
	floors, digesteds, fulls, judgeds []time.Duration
	peaks                             []int64
	bytes, rows                       int64 // read by the floor
	exitCode                          int   // of the last full run
}

// measureSize generates a batch of n units, warms the page cache, times
// floor and full run alternately and returns the medians.
func measureSize(bin string, o options, n int) (result, error) {
	work := filepath.Join(o.dir, fmt.Sprintf("units-%d", n))
	os.RemoveAll(work)
	t0 := time.Now()
	specPath, logDir, err := demo.Write(work, demo.Options{Units: n, Duration: o.duration})
	if err != nil {
		return result{}, err
	}
	fmt.Printf("generated %d logs in %.1f s\n", n, time.Since(t0).Seconds())
	files, err := logs.FindLogs([]string{logDir}, nil)
	if err != nil {
		return result{}, err
	}
	if err := warmCache(files); err != nil {
		return result{}, err
	}
	full := fullRun{bin: bin, spec: specPath, out: filepath.Join(work, "report"), logs: logDir}
	var s samples
	for k := 0; k < o.repeat; k++ {
		if err := s.measure(files, full); err != nil {
			return result{}, err
		}
	}
	r := s.result(n)
	fmt.Printf("  floor runs %s; with SHA-256 %s; full runs %s, of which before the reports %s\n",
		seconds(s.floors), seconds(s.digesteds), seconds(s.fulls), seconds(s.judgeds))
	fmt.Printf("%d units: %.0f MB, %d rows; floor %.2f s, full run %.2f s (medians), peak %.0f MB (worst)\n",
		n, float64(r.bytes)/1e6, r.rows, r.floor.Seconds(), r.full.Seconds(), float64(r.peakRSS)/1e6)
	if !o.keep {
		os.RemoveAll(filepath.Join(work, "logs"))
	}
	return r, nil
}

// warmCache reads the logs until a floor pass takes as long as the one
// before (within 5 %, at most five passes): freshly written logs are not
// all in memory at once, and a first pass over 20,000 of them can take
// twice as long as the next. Floor and full run then alternate, so that
// whatever else the machine does (page-cache reclaim, another process)
// falls on both, and the median of each is reported.
func warmCache(files []string) error {
	var last time.Duration
	for k := 0; k < 5; k++ {
		t0 := time.Now()
		if _, _, err := floor(files, false); err != nil {
			return err
		}
		d := time.Since(t0)
		if k > 0 && d > last*95/100 && d < last*105/100 {
			break
		}
		last = d
	}
	return nil
}

// measure times one floor, one floor with digests and one full run.
func (s *samples) measure(files []string, full fullRun) error {
	t0 := time.Now()
	var err error
	if s.bytes, s.rows, err = floor(files, false); err != nil {
		return err
	}
	s.floors = append(s.floors, time.Since(t0))
	t0 = time.Now()
	if _, _, err = floor(files, true); err != nil {
		return err
	}
	s.digesteds = append(s.digesteds, time.Since(t0))
	total, judged, peak, code, err := full.time()
	s.fulls = append(s.fulls, total)
	if err != nil {
		return err
	}
	s.judgeds = append(s.judgeds, judged)
	s.exitCode = code
	if peak > 0 {
		s.peaks = append(s.peaks, peak)
	}
	return nil
}

// result gives the medians of the samples and the worst peak memory.
func (s *samples) result(n int) result {
	r := result{units: n, bytes: s.bytes, rows: s.rows, exitCode: s.exitCode}
	r.floor, r.full = median(s.floors), median(s.fulls)
	r.digested, r.judged = median(s.digesteds), median(s.judgeds)
	for _, p := range s.peaks {
		r.peakRSS = max(r.peakRSS, p) // the worst peak, not the median
	}
	mb := float64(r.bytes) / 1e6
	r.floorMBs = mb / r.floor.Seconds()
	r.fullMBs = mb / r.full.Seconds()
	r.fullUnitsPerSecond = float64(n) / r.full.Seconds()
	return r
}

// fullRun is `stepgate run` on the batch, as a separate process.
type fullRun struct {
	bin, spec, out, logs string
}

// time runs stepgate once and returns its wall time, the time before its
// first report, its peak resident memory (0 when unknown) and its exit
// status. Its stderr is passed on without the timing line.
func (f fullRun) time() (total, judged time.Duration, peak int64, code int, err error) {
	cmd := exec.Command(f.bin, "run", "--quiet", "--timing", "--spec", f.spec, "--out", f.out, "--report-date", "2026-12-01", f.logs)
	var stderr strings.Builder
	cmd.Stderr = &stderr
	t0 := time.Now()
	err = cmd.Run()
	total = time.Since(t0)
	os.Stderr.WriteString(strings.ReplaceAll(stderr.String(), timingLine(stderr.String()), ""))
	reports, ok := reportsTime(stderr.String())
	if !ok && cmd.ProcessState != nil && (cmd.ProcessState.ExitCode() == 0 || cmd.ProcessState.ExitCode() == 1) {
		return total, 0, 0, 0, fmt.Errorf("stepgate run printed no timing line")
	}
	if cmd.ProcessState == nil {
		return total, 0, 0, 0, fmt.Errorf("stepgate run: %w", err)
	}
	code = cmd.ProcessState.ExitCode()
	if code != 0 && code != 1 {
		return total, 0, 0, code, fmt.Errorf("stepgate run exited %d", code)
	}
	if ru, ok := cmd.ProcessState.SysUsage().(*syscall.Rusage); ok {
		peak = ru.Maxrss * 1024 // kilobytes on Linux
	}
	return total, total - reports, peak, code, nil
}

// printTables prints the throughput table, the time shares and the growth
// from the middle to the largest batch.
func printTables(results []result) {
	fmt.Println()
	fmt.Printf("%8s %9s %12s %12s %11s %10s %10s %10s\n", "units", "MB", "floor MB/s", "run MB/s", "run unit/s", "run/floor", "peak MB", "run s")
	for _, r := range results {
		fmt.Printf("%8d %9.0f %12.1f %12.1f %11.0f %9.0f%% %10.0f %10.2f\n",
			r.units, float64(r.bytes)/1e6, r.floorMBs, r.fullMBs, r.fullUnitsPerSecond, 100*r.fullMBs/r.floorMBs, float64(r.peakRSS)/1e6, r.full.Seconds())
	}
	// Where the run's time goes, as throughput shares of the floor: the
	// parse with the SHA-256 the reports need, the run before its first
	// report (start, spec, reading, judging), and the whole run.
	fmt.Println()
	fmt.Printf("%8s %14s %16s %12s\n", "units", "floor+SHA-256", "run w/o reports", "full run")
	for _, r := range results {
		share := func(d time.Duration) string { return fmt.Sprintf("%.0f%%", 100*r.floor.Seconds()/d.Seconds()) }
		fmt.Printf("%8d %14s %16s %12s\n", r.units, share(r.digested), share(r.judged), share(r.full))
	}
	if len(results) >= 2 {
		a, b := results[len(results)-2], results[len(results)-1]
		fmt.Printf("\ngrowth %d → %d units: samples ×%.2f, run time ×%.2f, peak memory ×%.2f\n",
			a.units, b.units, float64(b.rows)/float64(a.rows), b.full.Seconds()/a.full.Seconds(), float64(b.peakRSS)/float64(a.peakRSS))
	}
}

// median returns the median of d (the lower middle for an even count).
func median(d []time.Duration) time.Duration {
	s := append([]time.Duration(nil), d...)
	sort.Slice(s, func(i, j int) bool { return s[i] < s[j] })
	return s[(len(s)-1)/2]
}

func seconds(d []time.Duration) string {
	var parts []string
	for _, x := range d {
		parts = append(parts, fmt.Sprintf("%.2f", x.Seconds()))
	}
	return strings.Join(parts, ", ") + " s"
}

// timingLine returns the line of stderr that the run's --timing flag
// printed, with its newline, or "".
func timingLine(stderr string) string {
	for _, line := range strings.SplitAfter(stderr, "\n") {
		if strings.HasPrefix(line, "stepgate: ") && strings.Contains(line, " judged in ") {
			return line
		}
	}
	return ""
}

// reportsTime reads how long the run took to write its reports from its
// --timing line ("… reports written in 0.61 s").
func reportsTime(stderr string) (time.Duration, bool) {
	line := strings.TrimSpace(timingLine(stderr))
	const key = "reports written in "
	k := strings.LastIndex(line, key)
	if k < 0 {
		return 0, false
	}
	v, err := strconv.ParseFloat(strings.TrimSuffix(line[k+len(key):], " s"), 64)
	if err != nil {
		return 0, false
	}
	return time.Duration(v * float64(time.Second)), true
}

// floor reads and parses every file with one worker per core and returns the
// bytes and rows read; with digest, the reader also computes each file's
// SHA-256, as the run does.
func floor(files []string, digest bool) (bytes, rows int64, err error) {
	f := logs.Format{Time: "t", Command: "target", Response: "position", Effort: "drive", TimeScale: 1}
	jobs := make(chan string)
	var wg sync.WaitGroup
	var nb, nr atomic.Int64
	for w := 0; w < runtime.NumCPU(); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			// Per-worker reusable buffers, as the batch uses. The bare
			// floor computes no SHA-256: that is the run's work, not the
			// parse's.
			rd := logs.NewReader(f).Shared()
			if !digest {
				rd = rd.WithoutDigest()
			}
			for p := range jobs {
				lg, err := rd.ReadFile(p)
				if lg != nil {
					nb.Add(lg.Size)
					nr.Add(int64(lg.Rows))
				} else if fi, serr := os.Stat(p); serr == nil && err != nil {
					nb.Add(fi.Size()) // the truncated demo log still counts as read
				}
			}
		}()
	}
	for _, p := range files {
		jobs <- p
	}
	close(jobs)
	wg.Wait()
	return nb.Load(), nr.Load(), nil
}
