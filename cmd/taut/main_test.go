package main

import (
	"bytes"
	"context"
	"strings"
	"testing"
)

func TestRun_Dispatch(t *testing.T) {
	tests := []struct {
		name     string
		args     []string
		wantCode int
		wantOut  string // in stdout
		wantErr  string // in stderr
	}{
		{"NoArgs", nil, 2, "", "no command given"},
		{"Help", []string{"help"}, 0, "commands:", ""},
		{"DashH", []string{"-h"}, 0, "taut <command>", ""},
		{"Unknown", []string{"tune"}, 2, "", `unknown command "tune"`},
		{"EveryCommandListed", []string{"--help"}, 0, "inputs", ""},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var out, errOut bytes.Buffer
			code := exitCode(run(context.Background(), tc.args, &out, &errOut), &errOut)
			if code != tc.wantCode {
				t.Errorf("exit code = %d, want %d (stderr %q)", code, tc.wantCode, errOut.String())
			}
			if !strings.Contains(out.String(), tc.wantOut) {
				t.Errorf("stdout %q does not contain %q", out.String(), tc.wantOut)
			}
			if !strings.Contains(errOut.String(), tc.wantErr) {
				t.Errorf("stderr %q does not contain %q", errOut.String(), tc.wantErr)
			}
		})
	}
}
