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
	code := run(ctx, os.Args[1:], os.Stdout, os.Stderr)
	stop()
	os.Exit(code)
}
