package cli

import (
	"context"
	"fmt"
	"io"
	"os"
	"os/signal"
	"strings"
	"syscall"
)

// exitInterrupted is the exit status after SIGINT or SIGTERM (128 + 2, the
// shell convention for a process ended by SIGINT).
const exitInterrupted = 130

// signalContext returns a context that the first SIGINT or SIGTERM
// cancels, so that every long loop stops and the command returns. A second
// signal ends the process at once with exitInterrupted. stop releases the
// signal handling.
func signalContext(errw io.Writer) (ctx context.Context, stop func()) {
	return notifyContext(errw, func(code int) { os.Exit(code) }, os.Interrupt, syscall.SIGTERM)
}

// notifyContext is signalContext with the exit function and the signals
// given (for tests).
func notifyContext(errw io.Writer, exit func(int), sigs ...os.Signal) (context.Context, func()) {
	ctx, cancel := context.WithCancelCause(context.Background())
	ch := make(chan os.Signal, 2)
	signal.Notify(ch, sigs...)
	done := make(chan struct{})
	go func() {
		select {
		case s := <-ch:
			cancel(interruption{s})
		case <-done:
			return
		}
		select {
		case <-ch:
			fmt.Fprintln(errw, "drawerfit: interrupted again: stopping at once")
			exit(exitInterrupted)
		case <-done:
		}
	}()
	return ctx, func() {
		signal.Stop(ch)
		close(done)
		cancel(nil)
	}
}

// interruption is the cause of a context cancelled by a signal.
type interruption struct{ sig os.Signal }

func (i interruption) Error() string { return "interrupted by " + signalName(i.sig) }

func signalName(s os.Signal) string {
	switch s {
	case os.Interrupt:
		return "SIGINT"
	case syscall.SIGTERM:
		return "SIGTERM"
	}
	return s.String()
}

// interruptedMessage says what a command stopped by a signal was doing
// when it stopped, from the error it returned (the domain packages wrap
// the context's error in a sentence such as "the search was interrupted").
func interruptedMessage(ctx context.Context, cmdPath string, err error) string {
	what := err.Error()
	for _, tail := range []string{": " + context.Canceled.Error(), context.Canceled.Error()} {
		what = strings.TrimSuffix(what, tail)
	}
	cause := "interrupted"
	if c := context.Cause(ctx); c != nil && c != context.Canceled {
		cause = c.Error()
	}
	msg := cmdPath + " " + cause
	if what != "" {
		msg += " (" + what + ")"
	}
	return msg + "; nothing was saved or written"
}
