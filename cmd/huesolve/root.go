package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"strings"
	"syscall"

	"github.com/spf13/cobra"
)

// version is the tool version, set at build time with
// -ldflags "-X main.version=...".
var version = "0.1.0-dev"

// Exit codes, documented in the root help and the README.
const (
	exitOK      = 0 // everything read, nothing flagged
	exitFailure = 1 // the command could not do its job
	exitUsage   = 2 // bad command line
	exitSkipped = 3 // done, but some inputs could not be read or solved and were skipped
	exitFlagged = 4 // done, all inputs read, but some results are flagged or failed acceptance
	// exitInterrupt is what a command returns when its context was
	// cancelled (interrupted): Execute turns it into 130 for SIGINT
	// (Ctrl-C) and exitTerminated for SIGTERM, 128 plus the signal's
	// number as shells report a command a signal ended.
	exitInterrupt  = 130
	exitTerminated = 143
)

// exitError carries an exit code other than 1 with an optional message.
type exitError struct {
	code int
	msg  string
}

func (e *exitError) Error() string { return e.msg }

// usageError marks a bad command line (exit code 2).
type usageError struct{ err error }

func (e *usageError) Error() string { return e.err.Error() }
func (e *usageError) Unwrap() error { return e.err }

func usagef(format string, a ...any) error { return &usageError{fmt.Errorf(format, a...)} }

const rootLong = `huesolve finds the concentration of each coloured compound in a mixture
from its UV-Vis absorbance scan, when the compounds' bands overlap so that a
single-wavelength standard curve would give wrong answers.

The work goes in three steps:
  1. calibrate  scan a blank and standards of known concentration; huesolve
                fits the absorptivity spectrum of each pure compound and
                checks linearity, and saves a reference set (JSON).
  2. verify     solve check standards of known composition against the
                reference set and report recovery, bias and pass/fail.
  3. solve      unmix sample scans into concentrations with uncertainties,
                fit figures and quality flags.

Try it on built-in invented data with:  huesolve demo

Exit codes:
  0  done, every input read and nothing flagged
  1  failure: the command could not do its job (including a failed write
     to an output file or standard output; an existing -o FILE is then
     left as it was)
  2  bad command line
  3  done, but some inputs could not be read or solved (they are listed on stderr)
  4  done, all inputs read, but some results are flagged or failed acceptance
  130 interrupted (Ctrl-C), 143 terminated (SIGTERM): the command stops
      cleanly and leaves its -o file and plots as they were

` + caution

// caution ends the help of every command that gives results (and the
// demo's closing words): where results could hurt someone, they defer to
// regulations, validated methods and licensed professionals.
const caution = `Caution: results support, but do not replace, a validated analytical method.
For food, drug, water or other regulated testing follow local regulations,
the validated procedure and the responsible licensed professional.`

// newRootCmd builds the command tree.
func newRootCmd() *cobra.Command {
	root := &cobra.Command{
		Use:           "huesolve",
		Short:         "Unmix UV-Vis spectra of coloured mixtures into concentrations",
		Long:          rootLong,
		SilenceUsage:  true,
		SilenceErrors: true,
		Version:       version,
	}
	root.SetVersionTemplate("huesolve {{.Version}}\n")
	// Shell completion stays available ("huesolve completion bash") but
	// is left out of the command list, which is about the lab work.
	root.CompletionOptions.HiddenDefaultCmd = true
	root.SetFlagErrorFunc(func(c *cobra.Command, err error) error {
		return &usageError{err}
	})
	root.AddCommand(&cobra.Command{
		Use:   "version",
		Short: "Print the huesolve version",
		Args:  wantArgs(0, 0, "no arguments"),
		RunE: func(cmd *cobra.Command, args []string) error {
			fmt.Fprintf(cmd.OutOrStdout(), "huesolve %s\n", version)
			return nil
		},
	})
	// One constructor per command file, in the order of the lab work
	// (help lists them alphabetically).
	root.AddCommand(
		newDemoCmd(),
		newLookCmd(),
		newConvertCmd(),
		newCalibrateCmd(),
		newInspectCmd(),
		newWindowCmd(),
		newVerifyCmd(),
		newSequenceCmd(),
		newSolveCmd(),
		newHistoryCmd(),
	)
	// Any argument check left to cobra's own wording is still a bad
	// command line (exit 2).
	for _, c := range root.Commands() {
		if check := c.Args; check != nil {
			c.Args = func(cmd *cobra.Command, args []string) error {
				if err := check(cmd, args); err != nil {
					var ue *usageError
					if errors.As(err, &ue) {
						return err
					}
					return &usageError{err}
				}
				return nil
			}
		}
	}
	return root
}

// wantArgs checks that a command gets from min to max arguments (max < 0:
// no upper limit); want says in words what it takes, e.g. "a reference
// set and at least one scan", for the message.
func wantArgs(min, max int, want string) cobra.PositionalArgs {
	return func(cmd *cobra.Command, args []string) error {
		n := len(args)
		switch {
		case n < min && n == 0:
			return usagef("%s needs %s", cmd.Name(), want)
		case n < min:
			return usagef("%s needs %s; only %s %s given", cmd.Name(), want, argList(args), wasWere(n))
		case max >= 0 && n > max:
			return usagef("%s takes %s; %d %s given: %s", cmd.Name(), want, n, wasWere(n), argList(args))
		}
		return nil
	}
}

// argList names the arguments, the first few only.
func argList(args []string) string {
	const shown = 5
	if len(args) > shown {
		return strings.Join(args[:shown], ", ") + ", ..."
	}
	return strings.Join(args, ", ")
}

// suggestion is "; did you mean look?" for the commands cobra suggests.
func suggestion(names []string) string {
	switch len(names) {
	case 0:
		return ""
	case 1:
		return "; did you mean " + names[0] + "?"
	}
	return "; did you mean one of " + strings.Join(names, ", ") + "?"
}

func wasWere(n int) string {
	if n == 1 {
		return "was"
	}
	return "were"
}

// Execute runs huesolve with args and returns the exit code. Tests call it
// in-process. Every write to stdout is checked: when one fails, the
// command ends with exit code 1 (unless it was interrupted or given a bad
// command line) and says so on stderr.
//
// Signals: the first SIGINT (Ctrl-C) or SIGTERM cancels the command's
// context (cmd.Context()) with the signal as its cause. Every long-running
// command checks that context in its loops (directly, or through the
// library's ...Context functions and spectrum.ReadOptions.Context), stops,
// writes nothing to its -o file or plot folder, and returns an exitError
// with code exitInterrupt and a message saying how far it got; Execute
// then exits 130 for SIGINT and 143 for SIGTERM (signalExit). After the
// first signal the signals have their default effect again, so a second
// one ends a command that does not stop at once.
func Execute(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	ctx, cancel := context.WithCancelCause(context.Background())
	defer cancel(nil)
	sigs := make(chan os.Signal, 1)
	signal.Notify(sigs, os.Interrupt, syscall.SIGTERM)
	defer signal.Stop(sigs)
	go func() {
		select {
		case s := <-sigs:
			signal.Stop(sigs)
			cancel(&signalCause{sig: s})
		case <-ctx.Done():
		}
	}()
	return execute(ctx, args, stdin, stdout, stderr)
}

// signalCause is the cause of the context cancellation a signal makes.
type signalCause struct{ sig os.Signal }

func (c *signalCause) Error() string { return "interrupted by " + c.sig.String() }

// signalExit is the exit code of a command interrupted through ctx: 143
// when SIGTERM cancelled it, else 130.
func signalExit(ctx context.Context) int {
	var sc *signalCause
	if errors.As(context.Cause(ctx), &sc) && sc.sig == syscall.SIGTERM {
		return exitTerminated
	}
	return exitInterrupt
}

// interrupted reports whether err is the cancellation of ctx (the command
// was interrupted by a signal).
func interrupted(ctx context.Context, err error) bool {
	return err != nil && ctx.Err() != nil && errors.Is(err, ctx.Err())
}

// execute runs the command tree under ctx and returns the exit code.
func execute(ctx context.Context, args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	out := &checkedWriter{w: stdout}
	root := newRootCmd()
	ctx = context.WithValue(ctx, argsKey{}, args)
	root.SetArgs(args)
	root.SetIn(stdin)
	root.SetOut(out)
	root.SetErr(stderr)
	cmd, err := root.ExecuteContextC(ctx)
	code := exitCode(ctx, root, cmd, args, err, stderr)
	werr := out.failed()
	if werr == nil || code == exitInterrupt || code == exitTerminated || code == exitUsage {
		return code
	}
	var se *stdoutError
	if !errors.As(err, &se) {
		fmt.Fprintln(stderr, "huesolve:", werr)
	}
	return exitFailure
}

// exitCode says err (the command's error, nil when it succeeded) on
// stderr and returns the exit code for it; cmd is the command that ran.
func exitCode(ctx context.Context, root, cmd *cobra.Command, args []string, err error, stderr io.Writer) int {
	if err == nil {
		return exitOK
	}
	var ee *exitError
	if errors.As(err, &ee) {
		if ee.msg != "" {
			fmt.Fprintln(stderr, "huesolve:", ee.msg)
		}
		if ee.code == exitInterrupt {
			return signalExit(ctx)
		}
		return ee.code
	}
	// cobra reports a mistyped command name itself, as a plain error
	// over several lines.
	if strings.HasPrefix(err.Error(), "unknown command ") && len(args) > 0 {
		err = usagef("no command %q%s", args[0], suggestion(root.SuggestionsFor(args[0])))
	}
	fmt.Fprintln(stderr, "huesolve:", userMessage(err))
	var ue *usageError
	if errors.As(err, &ue) {
		if cmd == nil {
			cmd = root
		}
		fmt.Fprintf(stderr, "huesolve: run '%s --help' for usage\n", cmd.CommandPath())
		return exitUsage
	}
	if interrupted(ctx, err) {
		return signalExit(ctx)
	}
	return exitFailure
}
