// Command canalstep designs the long section of an irrigation canal: it samples
// a DEM along GeoJSON alignments, designs the canal section and places drop
// structures where the ground falls faster than the velocity limits allow.
// See doc.go for usage.
package main

import (
	"context"
	"fmt"
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
	err := run(ctx, os.Args[1:], os.Stdout, os.Stderr)
	if err != nil {
		fmt.Fprintf(os.Stderr, "canalstep: %s\n", oneLine(err))
	}
	os.Exit(exitCode(err))
}
