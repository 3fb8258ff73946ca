package main

import (
	"context"
	"errors"
	"io"
)

// cmdScale is being built; its owner replaces this file.
func cmdScale(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	return errors.New("scale: not built yet")
}
