package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"taut/monitor/tension"
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
	// design.md "Cautions": output that shows high margins carries the caution, in the
	// one wording of tension.Caution.
	out, _, err := runCmd(t, cmdScale, "testdata/scale_high.toml")
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(strings.Join(strings.Fields(out), " "), "CAUTION: "+tension.Caution) {
		t.Errorf("output lacks the caution %q", tension.Caution)
	}
	for _, want := range []string{"eye protection", "raise pitch in stages", "maker's specification and local professional practice"} {
		if !strings.Contains(strings.Join(strings.Fields(out), " "), want) {
			t.Errorf("output lacks %q", want)
		}
	}
	for id, flag := range map[string]string{"low": "low", "normal": "3.89e-04", "warn": "warn", "alarm": "ALARM"} {
		if got := scaleRowFlag(out, id); got != flag {
			t.Errorf("string %q: row ends in %q, want %q", id, got, flag)
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

// scaleRowFlag returns the last field of the table row of string id ("" when none).
func scaleRowFlag(out, id string) string {
	for _, line := range strings.Split(out, "\n") {
		if f := strings.Fields(line); len(f) >= 13 && f[0] == id {
			return f[len(f)-1]
		}
	}
	return ""
}

// TestScale_CautionFloor: a config's margin_warn may warn earlier than the 70 %
// caution floor (tension.CautionFloor, reference-values §4.1 trade figure), never later.
func TestScale_CautionFloor(t *testing.T) {
	for _, c := range []struct {
		name       string
		warn       float64
		wantFlag   string
		wantWarnAt float64
	}{
		{"LateConfigCapped", 0.80, "warn", 0.70}, // 76 % string: flagged although margin_warn is 80 %
		{"EarlyConfigKept", 0.60, "warn", 0.60},
		{"AboveString", 0.78, "warn", 0.70},
	} {
		t.Run(c.name, func(t *testing.T) {
			cfg := writeFloorConfig(t, c.warn)
			out, _, err := runCmd(t, cmdScale, cfg)
			if err != nil {
				t.Fatal(err)
			}
			if got := scaleRowFlag(out, "warn"); got != c.wantFlag {
				t.Errorf("76 %% string flagged %q, want %q:\n%s", got, c.wantFlag, out)
			}
			if !strings.Contains(out, "CAUTION: ") {
				t.Error("no caution with a string above the floor")
			}
			js, _, err := runCmd(t, cmdScale, "--json", cfg)
			if err != nil {
				t.Fatal(err)
			}
			var doc struct {
				MarginWarn float64 `json:"margin_warn"`
				Caution    string  `json:"caution"`
			}
			if err := json.Unmarshal([]byte(js), &doc); err != nil {
				t.Fatal(err)
			}
			if doc.MarginWarn != c.wantWarnAt || doc.Caution != tension.Caution {
				t.Errorf("JSON margin_warn %g, caution %q; want %g and tension.Caution", doc.MarginWarn, doc.Caution, c.wantWarnAt)
			}
		})
	}
}

// writeFloorConfig writes scale_high.toml's "warn" string (76 % of an invented flat
// strength) alone, with the given margin_warn and margin_alarm 0.9.
func writeFloorConfig(t *testing.T, warn float64) string {
	t.Helper()
	src := fmt.Sprintf(`name = "caution floor test"
[listen]
margin_warn = %g
margin_alarm = 0.9
[materials.test_steel]
like = "music_wire"
strength_mpa = 2000
basis = "invented flat strength for the test"
[[string]]
id = "warn"
note = "A4"
length_mm = 500
core = "test_steel"
core_mm = 0.9
`, warn)
	path := filepath.Join(t.TempDir(), "floor.toml")
	if err := os.WriteFile(path, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// TestScale_TargetIsFirstPartial: the target is the first partial; f0, tension, margin
// and B come from the ideal f0 = f1/√(1+B) (tension package doc). reference-values §1.2
// E6 (trade figure from a technicians' mailing list, 2000): C8 on 54.0 mm of 0.785 mm
// music wire is 776.5 N, 70.8 % of the ASTM minimum, when C8 is taken as f0; tuned so
// that its first partial reads C8 it is 763.9 N, 69.7 % (derived, 14.2 cents lower f0).
func TestScale_TargetIsFirstPartial(t *testing.T) {
	path := filepath.Join(t.TempDir(), "c8.toml")
	src := "name = \"top C\"\n[[string]]\nid = \"C8\"\nnote = \"C8\"\nlength_mm = 54\ncore = \"music_wire\"\ncore_mm = 0.785\n"
	if err := os.WriteFile(path, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	out, _, err := runCmd(t, cmdScale, "--json", path)
	if err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Strings []scaleRow `json:"strings"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	r := doc.Strings[0]
	for _, c := range []struct {
		what      string
		got, want float64
		tol       float64
	}{
		{"target_hz (ISO 16: C8)", r.TargetHz, 4186.009, 1e-6},
		{"first_partial_hz", r.FirstPartialHz, 4186.009, 1e-6},
		{"f0_hz (derived)", r.F0Hz, 4151.859, 1e-6},
		{"tension_n (derived)", r.TensionN, 763.89, 1e-4},
		{"margin (derived)", r.Margin, 0.6966, 2e-4},
		{"inharmonicity (derived)", r.Inharmonicity, 0.016518, 1e-4},
	} {
		if math.Abs(c.got-c.want) > c.tol*c.want {
			t.Errorf("%s = %.7g, want %.7g", c.what, c.got, c.want)
		}
	}
	if r.Flag != "" {
		t.Errorf("flag %q: the first partial tuned to C8 is under the 70 %% floor", r.Flag)
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
