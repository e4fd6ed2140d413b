package main

import (
	"context"
	"fmt"
	"io"
)

func runServe(_ context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("serve", "[--listen ADDR] [--data DIR]", stderr)
	listen := fs.String("listen", "127.0.0.1:8080", "`address` to listen on; 0.0.0.0:8080 serves the lab LAN")
	data := fs.String("data", defaultDataDir(), "`folder` that holds the session database")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	if len(pos) > 0 {
		return usagef("serve takes no arguments, got %q", pos)
	}
	_ = data
	return fmt.Errorf("the web app is not built yet (it would listen on %s); use 'matchbench inspect' meanwhile", *listen)
}
