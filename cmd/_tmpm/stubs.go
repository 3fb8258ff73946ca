package main

import (
	"context"
	"io"
)

func cmdDemo(ctx context.Context, args []string, stdout, stderr io.Writer) error   { return nil }
func cmdScale(ctx context.Context, args []string, stdout, stderr io.Writer) error  { return nil }
func cmdCheck(ctx context.Context, args []string, stdout, stderr io.Writer) error  { return nil }
func cmdListen(ctx context.Context, args []string, stdout, stderr io.Writer) error { return nil }
func cmdReport(ctx context.Context, args []string, stdout, stderr io.Writer) error { return nil }
