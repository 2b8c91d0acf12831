package main

import (
	"context"
	"fmt"
	"os"
	"os/signal"
	"runtime/debug"
	"runtime/pprof"
	"syscall"
)

// startProfiles starts a CPU profile into cpuFile and arranges a heap
// profile into memFile, each when its name is not empty. The returned
// function writes the heap profile, then stops the CPU profile; call it
// when the run ends. A heap profile that cannot be written is skipped: it
// is a developer's aid, not part of the run.
func startProfiles(cpuFile, memFile string) (stop func(), err error) {
	stopCPU := func() {}
	if cpuFile != "" {
		pf, err := os.Create(cpuFile)
		if err != nil {
			return nil, fmt.Errorf("--cpu-profile: %w", err)
		}
		pprof.StartCPUProfile(pf)
		stopCPU = func() { pprof.StopCPUProfile(); pf.Close() }
	}
	return func() {
		if memFile != "" {
			if pf, err := os.Create(memFile); err == nil {
				pprof.Lookup("allocs").WriteTo(pf, 0)
				pf.Close()
			}
		}
		stopCPU()
	}, nil
}

// interruptible returns a context that SIGINT and SIGTERM cancel from the
// run's start: the batch stops taking files and no report is renamed into
// place. A second signal ends the program at once (the first restores the
// default action). Call stop when the run ends.
func interruptible(ctx context.Context) (_ context.Context, stop func()) {
	if ctx == nil {
		ctx = context.Background()
	}
	ctx, stop = signal.NotifyContext(ctx, os.Interrupt, syscall.SIGTERM)
	go func() {
		<-ctx.Done()
		stop()
	}()
	return ctx, stop
}

// tuneGC trades a little memory for less collection work: a batch allocates
// fast but keeps little (one summary per unit). Unless the user set GOGC or
// GOMEMLIMIT, the collector runs at half its default frequency, with a
// soft memory limit that makes it run more often only when the heap
// approaches the limit: 256 MiB, or the summaries the batch is expected to
// keep (about 6 KiB per unit) plus 128 MiB for the work in hand when that
// is more, so that a very large batch is not collected without end.
func tuneGC(files int) {
	if os.Getenv("GOGC") == "" {
		debug.SetGCPercent(200)
	}
	if os.Getenv("GOMEMLIMIT") == "" {
		debug.SetMemoryLimit(memoryLimit(files))
	}
}

// memoryLimit is the soft memory limit tuneGC sets for a batch of files.
func memoryLimit(files int) int64 {
	const perUnit, working, floor = 6 << 10, 128 << 20, 256 << 20
	return max(floor, int64(files)*perUnit+working)
}
