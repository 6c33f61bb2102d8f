// Command bandedge turns spectrophotometer exports into band-edge results:
// the absorption coefficient α(E), a fitted band gap E_g, Urbach energy,
// amplitude and Kane energy with uncertainty budgets, and PNG reports.
//
// Run "bandedge help" for the commands.
package main

import (
	"context"
	"os"
	"os/signal"
	"syscall"
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	go func() {
		// The first Ctrl-C (or SIGTERM) cancels ctx and the command stops
		// cleanly, writing what it finished; restoring the default
		// handling makes a second one end the process at once.
		<-ctx.Done()
		stop()
	}()
	code := run(ctx, os.Args[1:], os.Stdout, os.Stderr)
	stop()
	os.Exit(code)
}
