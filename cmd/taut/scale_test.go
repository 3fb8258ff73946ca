package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"flag"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"taut/monitor/instrument"
)

// The -update flag rewrites the goldens. Other test files of this package may
// define the same flag; whichever is declared first serves both.
func init() {
	if flag.Lookup("update") == nil {
		flag.Bool("update", false, "rewrite golden files under testdata/")
	}
}

func updateGoldens() bool {
	f := flag.Lookup("update")
	if f == nil {
		return false
	}
	v, _ := f.Value.(flag.Getter).Get().(bool)
	return v
}

func runCmd(t *testing.T, cmd func(context.Context, []string, io.Writer, io.Writer) error, args ...string) (string, string, error) {
	t.Helper()
	var out, errOut bytes.Buffer
	err := cmd(context.Background(), args, &out, &errOut)
	return out.String(), errOut.String(), err
}

func golden(t *testing.T, name, got string) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if updateGoldens() {
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test ./cmd/taut -run TestScale -update)", err)
	}
	if got != string(want) {
		t.Errorf("output differs from %s (run with -update to accept):\n%s", path, firstDiff(got, string(want)))
	}
}

func firstDiff(got, want string) string {
	g, w := strings.Split(got, "\n"), strings.Split(want, "\n")
	for i := 0; i < len(g) || i < len(w); i++ {
		var a, b string
		if i < len(g) {
			a = g[i]
		}
		if i < len(w) {
			b = w[i]
		}
		if a != b {
			return "line " + strconv.Itoa(i+1) + ":\n got: " + a + "\nwant: " + b
		}
	}
	return ""
}

func TestScale_Golden(t *testing.T) {
	for _, c := range []struct {
		name   string
		args   []string
		golden string
	}{
		{"HarpText", []string{"../../configs/harp36.toml"}, "scale_harp36.txt"},
		{"HarpJSON", []string{"--json", "../../configs/harp36.toml"}, "scale_harp36.json"},
		{"UprightKgf", []string{"--units", "kgf", "../../configs/upright.toml"}, "scale_upright_kgf.txt"},
		{"UprightCSVLbf", []string{"../../configs/upright.toml", "--csv", "--units=lbf"}, "scale_upright_lbf.csv"},
		{"MarginBands", []string{"testdata/scale_high.toml"}, "scale_high.txt"},
		{"MarginBandsJSON", []string{"-json", "testdata/scale_high.toml"}, "scale_high.json"},
	} {
		t.Run(c.name, func(t *testing.T) {
			out, _, err := runCmd(t, cmdScale, c.args...)
			if err != nil {
				t.Fatal(err)
			}
			golden(t, c.golden, out)
		})
	}
}

func TestScale_Caution(t *testing.T) {
	// design.md "Cautions": output that shows high margins carries the caution.
	out, _, err := runCmd(t, cmdScale, "testdata/scale_high.toml")
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"CAUTION", "eye protection", "raise the pitch in\nstages", "maker's specification and local professional practice"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q", want)
		}
	}
	for id, flag := range map[string]string{"low": "low", "normal": "3.88e-04", "warn": "warn", "alarm": "ALARM"} {
		found := false
		for _, line := range strings.Split(out, "\n") {
			if f := strings.Fields(line); len(f) == 13 || len(f) == 14 { // a table row
				if f[0] == id {
					found = f[len(f)-1] == flag
				}
			}
		}
		if !found {
			t.Errorf("string %q: no row ending in %q", id, flag)
		}
	}
	out, _, _ = runCmd(t, cmdScale, "../../configs/upright.toml")
	if strings.Contains(out, "CAUTION") {
		t.Error("caution shown without a high margin")
	}
	_, stderr, err := runCmd(t, cmdScale, "--csv", "testdata/scale_high.toml")
	if err != nil || !strings.Contains(stderr, "CAUTION") {
		t.Errorf("--csv with high margins: err %v, stderr %q", err, stderr)
	}
}

func TestScale_JSONFields(t *testing.T) {
	out, _, err := runCmd(t, cmdScale, "--json", "../../configs/upright.toml")
	if err != nil {
		t.Fatal(err)
	}
	var doc map[string]any
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"strings", "total_tension_n", "sections", "strength_basis"} {
		if _, ok := doc[k]; !ok {
			t.Errorf("JSON lacks top-level %q", k)
		}
	}
	strs := doc["strings"].([]any)
	if len(strs) != 113 {
		t.Fatalf("%d strings, want 113", len(strs))
	}
	first := strs[0].(map[string]any)
	for _, k := range []string{"id", "target_hz", "length_m", "f0_hz", "mass_per_m_kg", "tension_n", "breaking_n", "margin", "inharmonicity"} {
		if first[k] == nil {
			t.Errorf("string lacks %q", k)
		}
	}
	var sum float64
	for _, s := range strs {
		sum += s.(map[string]any)["tension_n"].(float64)
	}
	if total := doc["total_tension_n"].(float64); abs(total-sum) > 1e-6*sum {
		t.Errorf("total_tension_n %g, sum of strings %g", total, sum)
	}
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

func TestScale_BadArgs(t *testing.T) {
	for _, c := range []struct {
		name string
		args []string
		want string
	}{
		{"NoConfig", nil, "want a config file"},
		{"BadUnits", []string{"--units", "stone", "../../configs/harp36.toml"}, `--units "stone": want si, kgf or lbf`},
		{"JSONAndCSV", []string{"--json", "--csv", "../../configs/harp36.toml"}, "not both"},
		{"TwoConfigs", []string{"../../configs/harp36.toml", "../../configs/upright.toml"}, "want one config file"},
		{"BadConfig", []string{"../../monitor/instrument/testdata/bad/negative_length.toml"}, "negative_length.toml:6: string#1.length_mm = -620"},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, _, err := runCmd(t, cmdScale, c.args...)
			var u usageError
			if !errors.As(err, &u) || !strings.Contains(err.Error(), c.want) {
				t.Errorf("err = %v; want a usage error containing %q", err, c.want)
			}
		})
	}
}

func TestCheck(t *testing.T) {
	out, _, err := runCmd(t, cmdCheck, "../../configs/harp36.toml")
	if err != nil || !strings.HasPrefix(out, "ok: 36 strings") {
		t.Errorf("check harp36: %q, %v", out, err)
	}
	out, _, err = runCmd(t, cmdCheck, "../../configs/upright.toml")
	if err != nil || !strings.HasPrefix(out, "ok: 113 strings") {
		t.Errorf("check upright: %q, %v", out, err)
	}
	_, _, err = runCmd(t, cmdCheck, "../../monitor/instrument/testdata/bad/wrong_type.toml")
	var u usageError
	var list *instrument.Errors
	if !errors.As(err, &u) || !errors.As(err, &list) || len(list.List) != 3 {
		t.Fatalf("check broken config: %v; want a usage error (exit 2) listing 3 errors", err)
	}
	if code := exitCode(err, &bytes.Buffer{}); code != 2 {
		t.Errorf("exit code %d, want 2", code)
	}
	_, _, err = runCmd(t, cmdCheck, "no/such/config.toml")
	if err == nil || errors.As(err, &u) {
		t.Errorf("missing file: %v; want a plain error (exit 1)", err)
	}
}
