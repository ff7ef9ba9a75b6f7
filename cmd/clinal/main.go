// Command clinal computes principal components of large sample-by-marker
// genotype matrices out of core: import, QC, PCA, projection, diagnostics,
// benchmarks and Slurm scale-out. This package is thin wiring: each
// subcommand parses its flags into an options struct, calls one package
// function and renders the result. The work lives in matrixio, qc and
// randsvd.
package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"syscall"
	"time"

	"github.com/clinal/clinal/matrixio"
)

// version is set at build time with -ldflags "-X main.version=...".
var version = "0.1.0-dev"

// env is what a subcommand may touch of the process: its streams and
// whether stderr is a terminal (for progress bars).
type env struct {
	stdin          io.Reader
	stdout, stderr io.Writer
	tty            bool
}

type command struct {
	run     func(ctx context.Context, e *env, args []string) error
	summary string
}

func commands() map[string]command {
	return map[string]command{
		"import":   {runImport, "convert VCF files or a dense TSV matrix into a .clinal store"},
		"inspect":  {runInspect, "print a store's dimensions and tables; --verify checks every chunk"},
		"export":   {runExport, "write a store (or a subset) back to VCF (BGZF)"},
		"simulate": {runSimulate, "generate a synthetic cohort (Balding-Nichols populations, admixture)"},
		"qc":       {runQC, "sample and marker statistics, filters, HWE, LD pruning"},
		"pca":      {runPCA, "top-k principal components of the standardized matrix"},
		"project":  {runProject, "place new samples on the axes of a finished PCA"},
		"bench":    {runBench, "measure and forecast memory and time against dataset size"},
		"cluster":  {runCluster, "run PCA passes as sharded Slurm steps"},
		"demo":     {runDemo, "the whole job on the invented Meridian Archipelago cohort"},
		"version":  {runVersion, "print the version"},
	}
}

func main() {
	ctx, cancel := context.WithCancelCause(context.Background())
	sigs := make(chan os.Signal, 1)
	signal.Notify(sigs, os.Interrupt, syscall.SIGTERM)
	go func() {
		s := <-sigs
		cancel(interrupted{s.(syscall.Signal)})
		// A second signal, or a clean-up that takes longer than 30 s, ends
		// the process at once.
		select {
		case <-sigs:
		case <-time.After(30 * time.Second):
		}
		os.Exit(128 + int(s.(syscall.Signal)))
	}()
	e := &env{stdin: os.Stdin, stdout: os.Stdout, stderr: os.Stderr, tty: isTerminal(os.Stderr)}
	code := run(ctx, e, os.Args[1:])
	os.Exit(code)
}

// interrupted is the cancellation cause of a signal: the exit code is
// 128 + its number (130 for SIGINT, 143 for SIGTERM).
type interrupted struct{ sig syscall.Signal }

func (i interrupted) Error() string { return "interrupted by " + i.sig.String() }

// run executes one subcommand and returns the process exit code: 0 ok,
// 1 runtime failure, 2 usage or bad input, 130/143 interrupted.
func run(ctx context.Context, e *env, args []string) int {
	cmds := commands()
	if len(args) == 0 || args[0] == "-h" || args[0] == "--help" || args[0] == "help" {
		printUsage(e.stderr, cmds)
		if len(args) == 0 {
			return 2
		}
		return 0
	}
	c, ok := cmds[args[0]]
	if !ok {
		fmt.Fprintf(e.stderr, "clinal: unknown command %q (run clinal help)\n", args[0])
		return 2
	}
	err := c.run(ctx, e, args[1:])
	if err == nil {
		return 0
	}
	var help *helpRequest
	if errors.As(err, &help) {
		fmt.Fprint(e.stdout, help.text)
		return 0
	}
	if errors.Is(err, context.Canceled) || ctx.Err() != nil {
		code := 130
		var in interrupted
		if errors.As(context.Cause(ctx), &in) {
			code = 128 + int(in.sig)
		}
		hint := "rerun the same command to start again"
		if args[0] == "pca" || args[0] == "cluster" {
			hint = "rerun the same command to resume from the last completed pass"
		}
		fmt.Fprintf(e.stderr, "clinal %s: interrupted; no partial output left; %s\n", args[0], hint)
		return code
	}
	fmt.Fprintf(e.stderr, "clinal %s: %s\n", args[0], oneLine(err.Error()))
	if matrixio.IsBadInput(err) {
		return 2
	}
	return 1
}

func oneLine(s string) string {
	b := []byte(s)
	for i, c := range b {
		if c == '\n' || c == '\r' {
			b[i] = ' '
		}
	}
	return string(b)
}

func printUsage(w io.Writer, cmds map[string]command) {
	fmt.Fprintln(w, "usage: clinal COMMAND [arguments]; clinal COMMAND -h for its flags")
	for _, n := range []string{"demo", "simulate", "import", "inspect", "export", "qc", "pca", "project", "bench", "cluster", "version"} {
		fmt.Fprintf(w, "  %-9s %s\n", n, cmds[n].summary)
	}
}

func runVersion(_ context.Context, e *env, _ []string) error {
	fmt.Fprintf(e.stdout, "clinal %s\n", version)
	return nil
}

func isTerminal(f *os.File) bool {
	fi, err := f.Stat()
	return err == nil && fi.Mode()&os.ModeCharDevice != 0
}

// notYet is the error of a capability that has not landed yet.
func notYet(what string) error {
	return fmt.Errorf("%s is not implemented yet in this version", what)
}
