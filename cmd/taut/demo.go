package main

import (
	"context"
	"errors"
	"io"
)

// cmdDemo is being built; its owner replaces this file.
func cmdDemo(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	return errors.New("demo: not built yet")
}
