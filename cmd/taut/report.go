package main

import (
	"context"
	"errors"
	"io"
)

// cmdReport is being built; its owner replaces this file.
func cmdReport(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	return errors.New("report: not built yet")
}
