// Command peakrss runs a command and prints, tab separated, its wall time
// in seconds, user and system CPU seconds and its peak resident set size
// in bytes (getrusage's ru_maxrss of the waited-for child, reported by
// Linux in KiB), then its exit status, on one line to FILE (-o) or stderr.
// The command's own output goes to this process's stdout/stderr. GNU time
// is not installed on the benchmark machines, hence this helper.
//
// Usage: peakrss [-o FILE] COMMAND [ARG...]
package main

import (
	"fmt"
	"os"
	"os/exec"
	"syscall"
	"time"
)

func main() {
	args := os.Args[1:]
	report := os.Stderr
	if len(args) >= 2 && args[0] == "-o" {
		f, err := os.Create(args[1])
		if err != nil {
			fmt.Fprintln(os.Stderr, "peakrss:", err)
			os.Exit(2)
		}
		defer f.Close()
		report, args = f, args[2:]
	}
	if len(args) < 1 {
		fmt.Fprintln(os.Stderr, "usage: peakrss [-o FILE] COMMAND [ARG...]")
		os.Exit(2)
	}
	cmd := exec.Command(args[0], args[1:]...)
	cmd.Stdin, cmd.Stdout, cmd.Stderr = os.Stdin, os.Stdout, os.Stderr
	t0 := time.Now()
	err := cmd.Run()
	wall := time.Since(t0).Seconds()
	code := 0
	if err != nil {
		if ee, ok := err.(*exec.ExitError); ok {
			code = ee.ExitCode()
		} else {
			fmt.Fprintln(os.Stderr, "peakrss:", err)
			os.Exit(127)
		}
	}
	ru, ok := cmd.ProcessState.SysUsage().(*syscall.Rusage)
	if !ok {
		fmt.Fprintln(os.Stderr, "peakrss: no rusage on this system")
		os.Exit(1)
	}
	fmt.Fprintf(report, "%.3f\t%.3f\t%.3f\t%d\t%d\n", wall,
		time.Duration(ru.Utime.Nano()).Seconds(), time.Duration(ru.Stime.Nano()).Seconds(), ru.Maxrss*1024, code)
	report.Close()
	os.Exit(code)
}
