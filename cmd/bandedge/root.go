package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"strings"

	"github.com/spf13/cobra"

	"bandedge/fit"
	"bandedge/io/specio"
)

// version is the tool version recorded in every result.
var version = "0.1.0-dev"

// Exit codes, documented in the README.
const (
	exitOK            = 0 // success; in batch and claim: every verdict passed
	exitInternal      = 1 // unexpected failure
	exitUsage         = 2 // bad flags or arguments
	exitInput         = 3 // an input file could not be read or understood
	exitFit           = 4 // a fit could not be made or did not converge
	exitFail          = 5 // a spec or claim verdict failed, or a verify check failed
	exitIndeterminate = 6 // a verdict could not be reached with this data
	exitCancelled     = 130
)

// flagError is a bad flag value or combination; it is the only error
// printed with the usage line.
type flagError struct{ err error }

func (e *flagError) Error() string { return e.err.Error() }
func (e *flagError) Unwrap() error { return e.err }

func flagErrorf(format string, a ...any) error {
	return &flagError{fmt.Errorf(format, a...)}
}

// exitError carries an exit code chosen by a command (verdicts), and
// optionally the error it stands for (err, for errors.Is).
type exitError struct {
	code int
	msg  string
	err  error
}

func (e *exitError) Error() string { return e.msg }
func (e *exitError) Unwrap() error { return e.err }

func newRootCmd(out, errOut io.Writer) *cobra.Command {
	root := &cobra.Command{
		Use:   "bandedge",
		Short: "Band-edge analysis of spectrophotometer scans",
		Long: "bandedge turns transmission and absorbance exports into the absorption coefficient α(E),\n" +
			"fits a physical model of the absorption edge and reports the band gap E_g, the Urbach energy,\n" +
			"the amplitude and the Kane energy E_P, each with an uncertainty budget.",
		SilenceUsage:  true,
		SilenceErrors: true,
		Version:       version,
	}
	root.SetOut(out)
	root.SetErr(errOut)
	root.SetFlagErrorFunc(func(_ *cobra.Command, err error) error { return &flagError{err} })
	root.AddCommand(newFitCmd(nil), newDemoCmd(nil), newVerifyCmd(nil), newTrendCmd(nil), newBatchCmd(nil), newClaimCmd(nil))
	// A wrong number of arguments, or an unknown command, is a usage
	// error (exit 2, with the usage line), like a bad flag: cobra's
	// argument validators return plain errors, so wrap them.
	for _, c := range root.Commands() {
		c.Args = usageArgs(c.Args)
	}
	root.Args = cobra.ArbitraryArgs
	root.SuggestionsMinimumDistance = 2
	root.RunE = func(cmd *cobra.Command, args []string) error {
		if len(args) == 0 {
			return cmd.Help()
		}
		msg := fmt.Sprintf("unknown command %q for %q", args[0], cmd.CommandPath())
		if s := cmd.SuggestionsFor(args[0]); len(s) > 0 {
			msg += "; did you mean " + strings.Join(s, " or ") + "?"
		}
		return &flagError{errors.New(msg)}
	}
	return root
}

// usageArgs wraps a cobra argument validator so that its errors are
// flagErrors.
func usageArgs(v cobra.PositionalArgs) cobra.PositionalArgs {
	if v == nil {
		return nil
	}
	return func(cmd *cobra.Command, args []string) error {
		if err := v(cmd, args); err != nil {
			return &flagError{err}
		}
		return nil
	}
}

// run executes the command line and maps errors to exit codes in one place.
func run(ctx context.Context, args []string, out, errOut io.Writer) int {
	root := newRootCmd(out, errOut)
	root.SetArgs(args)
	cmd, err := root.ExecuteContextC(ctx)
	if err == nil {
		return exitOK
	}
	var fe *flagError
	var ee *exitError
	var pe *specio.ParseError
	switch {
	case errors.As(err, &ee):
		if ee.msg != "" {
			fmt.Fprintln(errOut, "bandedge:", ee.msg)
		}
		return ee.code
	case errors.Is(err, context.Canceled):
		fmt.Fprintln(errOut, "bandedge: cancelled")
		return exitCancelled
	case errors.As(err, &fe):
		fmt.Fprintln(errOut, "bandedge:", err)
		if cmd != nil {
			fmt.Fprintln(errOut, cmd.UseLine())
			fmt.Fprintf(errOut, "Run '%s --help' for the flags.\n", cmd.CommandPath())
		}
		return exitUsage
	case errors.As(err, &pe), errors.Is(err, errInput):
		fmt.Fprintln(errOut, "bandedge:", err)
		return exitInput
	case errors.Is(err, fit.ErrNoData), errors.Is(err, fit.ErrTooFewPoints), errors.Is(err, errFit):
		fmt.Fprintln(errOut, "bandedge:", err)
		return exitFit
	}
	fmt.Fprintln(errOut, "bandedge:", err)
	return exitInternal
}

// errInput and errFit classify errors from the analysis pipeline.
var (
	errInput = errors.New("input error")
	errFit   = errors.New("fit error")
)
