// Command matchbench reads vector-network-analyser sweeps, finds where a
// device resonates and how wide its usable band is, and designs matching
// networks from parts that can be bought. With no subcommand it serves the
// bench web app; the other subcommands print what the same engine finds.
// The commands live in internal/cli.
//
// Exit codes: 0 on success, 1 when an input cannot be read or a check
// fails, 2 for bad usage.
package main

import (
	"context"
	"os"
	"os/signal"
	"syscall"

	"matchbench/internal/cli"
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	code := cli.Run(ctx, os.Args[1:], os.Stdout, os.Stderr)
	stop()
	os.Exit(code)
}
