// Command corvane-load drives a running corvane service with concurrent
// clients that log measurements and import CSV files for a fixed time, then
// counts every row (nothing lost, nothing doubled) and prints requests per
// second and latency percentiles.
//
//	corvane-load -url http://127.0.0.1:8080 -token TOKEN -project 1 -clients 16 -duration 10s
//
// It writes into new holes named LOAD-... in the given project: point it at a
// trial project or the demo programme, not at production data.
package main

import (
	"context"
	"flag"
	"fmt"
	"os"
	"os/signal"
	"time"

	"corvane/internal/loadtest"
)

func main() {
	var cfg loadtest.Config
	flag.StringVar(&cfg.BaseURL, "url", "http://127.0.0.1:8080", "service base URL")
	flag.StringVar(&cfg.Token, "token", os.Getenv("CORVANE_TOKEN"), "admin token of the project (env CORVANE_TOKEN)")
	flag.Int64Var(&cfg.Project, "project", 1, "project id to write into")
	flag.IntVar(&cfg.Clients, "clients", 16, "concurrent clients")
	flag.DurationVar(&cfg.Duration, "duration", 10*time.Second, "how long to send requests")
	flag.IntVar(&cfg.ImportRow, "import-rows", 50, "rows per imported file")
	flag.IntVar(&cfg.ImportEvery, "import-every", 10, "every n-th request of a client is a file import")
	flag.Parse()
	if cfg.Token == "" {
		fmt.Fprintln(os.Stderr, "corvane-load: -token (or CORVANE_TOKEN) is required")
		os.Exit(2)
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	res, err := loadtest.Run(ctx, cfg)
	fmt.Print(res)
	if err != nil {
		fmt.Fprintln(os.Stderr, "corvane-load:", err)
		os.Exit(1)
	}
}
