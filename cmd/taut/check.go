package main

import (
	"context"
	"errors"
	"io"
)

// cmdCheck is being built; its owner replaces this file.
func cmdCheck(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	return errors.New("check: not built yet")
}
