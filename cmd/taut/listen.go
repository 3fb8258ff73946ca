package main

import (
	"context"
	"errors"
	"io"
)

// cmdListen is being built; its owner replaces this file.
func cmdListen(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	return errors.New("listen: not built yet")
}
