// Command lipidsvc serves fatty-acid profile calculations for edible-oil
// refineries over HTTP. All behaviour lives in package service; main only
// wires the process to it.
package main

import (
	"context"
	_ "embed"
	"fmt"
	"os"
	"os/signal"
	"syscall"

	"lipidsvc/service"
)

// openapiSpec is the contract, embedded so the binary needs no files.
//
//go:embed openapi.yaml
var openapiSpec []byte

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	// After the first signal starts the graceful stop, a second one kills
	// the process the default way.
	go func() {
		<-ctx.Done()
		stop()
	}()
	if err := service.Run(ctx, os.Args[1:], os.Getenv, os.Stdout, openapiSpec); err != nil {
		fmt.Fprintln(os.Stderr, "lipidsvc:", err)
		os.Exit(1)
	}
}
