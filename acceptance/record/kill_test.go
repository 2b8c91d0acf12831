package record

import (
	"context"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"reflect"
	"syscall"
	"testing"
	"time"
)

// envKillChild carries, to a child copy of the test binary, the DSN it
// records into before it kills itself.
const envKillChild = "STEPGATE_RECORD_KILL_CHILD"

// A process killed (SIGKILL, no chance to clean up) in the middle of
// recording a run leaves the record as it was: the database rolls the open
// transaction back, and the next writer is not blocked by it.
func TestRecordRunKilledMidRun(t *testing.T) {
	if dsn := os.Getenv(envKillChild); dsn != "" {
		killedChild(dsn) // never returns
	}
	eachBackend(t, func(t *testing.T, b backend) {
		dsn := b.fresh(t)
		s := open(t, dsn)
		mustRecord(t, s, testRun(t0), testUnit("SN-0", 0, t0))
		before := counts(t, s)

		cmd := exec.Command(os.Args[0], "-test.run=^TestRecordRunKilledMidRun$")
		cmd.Env = append(os.Environ(), envKillChild+"="+dsn)
		out, err := cmd.CombinedOutput()
		var exit *exec.ExitError
		if !errors.As(err, &exit) || exit.Sys().(syscall.WaitStatus).Signal() != syscall.SIGKILL {
			t.Fatalf("the child was not killed mid-run: %v\n%s", err, out)
		}
		if after := counts(t, s); !reflect.DeepEqual(after, before) {
			t.Errorf("rows after a killed run: %v, want %v", after, before)
		}
		if b.name == "sqlite" {
			var check string
			if err := s.db.QueryRow("PRAGMA integrity_check").Scan(&check); err != nil || check != "ok" {
				t.Errorf("integrity_check = %q, %v", check, err)
			}
		}
		ctx, cancel := context.WithTimeout(context.Background(), 20*time.Second)
		defer cancel()
		res, err := s.RecordRun(ctx, testRun(t0.Add(time.Hour)), testSpec("A"), []Unit{testUnit("SN-K", 1, t0)})
		if err != nil || res.Recorded != 1 {
			t.Errorf("recording after the killed run: %+v, %v", res, err)
		}
	})
}

// killedChild records ten units and kills its own process with SIGKILL
// after the sixth is written, inside the transaction.
func killedChild(dsn string) {
	s, err := Open(context.Background(), dsn)
	if err != nil {
		fmt.Fprintln(os.Stderr, "child:", err)
		os.Exit(3)
	}
	var units []Unit
	for i := 1; i <= 10; i++ {
		units = append(units, testUnit("SN-K", i, t0.Add(time.Duration(i)*time.Minute)))
	}
	s.afterUnit = func(i int) {
		if i == 5 {
			syscall.Kill(os.Getpid(), syscall.SIGKILL)
			time.Sleep(time.Minute) // the signal arrives; nothing after it runs
		}
	}
	_, err = s.RecordRun(context.Background(), testRun(t0.Add(time.Hour)), testSpec("B"), units)
	fmt.Fprintln(os.Stderr, "child: RecordRun returned", err)
	os.Exit(4)
}
