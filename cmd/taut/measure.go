package main

import (
	"context"
	"errors"
	"io"
)

// cmdMeasure is being built; its owner replaces this file.
func cmdMeasure(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	return errors.New("measure: not built yet")
}
