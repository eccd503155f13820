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
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	err := run(ctx, os.Args[1:], os.Stdout, os.Stderr)
	stop()
	if err != nil {
		fmt.Fprintf(os.Stderr, "canalstep: %v\n", oneLine(err))
	}
	os.Exit(exitCode(err))
}
