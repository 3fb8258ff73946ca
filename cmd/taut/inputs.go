package main

import (
	"context"
	"errors"
	"io"
)

// cmdInputs is being built; its owner replaces this file.
func cmdInputs(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	return errors.New("inputs: not built yet")
}
