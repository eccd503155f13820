// Command canalstep designs the long section of an irrigation canal: it samples
// a DEM along GeoJSON alignments, designs the canal section and places drop
// structures where the ground falls faster than the velocity limits allow.
// See doc.go for usage.
package main

import (
	"context"
	"fmt"
	"io"
	"os"
	"os/signal"
	"syscall"
)

func main() {
	ctx, cancel := context.WithCancelCause(context.Background())
	sigs := make(chan os.Signal, 1)
	signal.Notify(sigs, os.Interrupt, syscall.SIGTERM, syscall.SIGHUP)
	go func() {
		s := <-sigs
		cancel(interrupted{s.(syscall.Signal)})
		signal.Stop(sigs) // a second signal ends the process at once
	}()
	os.Exit(runMain(ctx, os.Args[1:], os.Stdout, os.Stderr))
}

// runMain runs canalstep, prints a failure as one line on stderr and
// returns the exit status (exitCodeHelp).
func runMain(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	err := run(ctx, args, stdout, stderr)
	if err != nil {
		fmt.Fprintf(stderr, "canalstep: %s\n", oneLine(err))
	}
	return exitCode(err)
}
