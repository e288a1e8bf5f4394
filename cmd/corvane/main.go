// Command corvane stores, converts, checks and summarises oriented drill core
// measurements. See README.md.
package main

import (
	"context"
	"os"
	"os/signal"
	"syscall"

	"corvane/internal/cli"
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	code := cli.Main(ctx, os.Args[1:], os.Stdin, os.Stdout, os.Stderr, os.Getenv)
	stop()
	os.Exit(code)
}
