package instrument

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"
)

// TestParse_TargetIsFirstPartial: the breaking check compares the ideal-string f0 that
// sounds the target's first partial, not the target itself (tension package doc,
// "Target pitch"). C8 (ISO 16: 4186.009 Hz) on 0.785 mm music wire: f·L at breaking is
// about 268.6 Hz·m (reference-values §3.2), B ≈ 0.016 (§2.2), so f0 is ~14 cents below
// the first partial. At 64.2 mm the first partial is above the ideal breaking pitch
// but its f0 is below it: 99.3 % of breaking load (derived), accepted. At 64.5 mm even
// the f0 is above it: rejected.
func TestParse_TargetIsFirstPartial(t *testing.T) {
	cfg := func(lengthMM float64) string {
		return fmt.Sprintf("name = \"treble test\"\n[[string]]\nid = \"C8\"\nnote = \"C8\"\nlength_mm = %g\ncore = \"music_wire\"\ncore_mm = 0.785\n", lengthMM)
	}
	t.Run("F0BelowBreaking", func(t *testing.T) {
		c, err := Parse(mapFS(map[string]string{"c.toml": cfg(64.2)}), "c.toml")
		if err != nil {
			t.Fatalf("f0 below the breaking pitch: %v; want the string accepted", err)
		}
		s := c.Instrument.Strings[0]
		if s.Phys.Margin(s.Phys.Tension(s.TargetHz)) < 1 {
			t.Fatal("test string no longer has its first partial above the ideal breaking pitch")
		}
		f0, err := s.Phys.F0ForFirstPartial(s.TargetHz)
		if err != nil {
			t.Fatal(err)
		}
		if m := s.Phys.Margin(s.Phys.Tension(f0)); math.Abs(m-0.9927) > 0.0005 {
			t.Errorf("margin at f0 %.4f, want 0.9927 (derived)", m)
		}
	})
	t.Run("F0AboveBreaking", func(t *testing.T) {
		_, err := Parse(mapFS(map[string]string{"c.toml": cfg(64.5)}), "c.toml")
		var list *Errors
		if !errors.As(err, &list) || len(list.List) != 1 {
			t.Fatalf("Parse: %v; want one error", err)
		}
		fe := list.List[0]
		for _, want := range []string{"target 4186.01 Hz is above the breaking pitch", "ideal-string f0 4169.27 Hz against 4164.82 Hz"} {
			if fe.Field != "string#1.note" || !strings.Contains(fe.Want, want) {
				t.Errorf("error %v; want string#1.note containing %q", fe, want)
			}
		}
	})
	t.Run("BelowBareCore", func(t *testing.T) {
		// A 3 mm core on 40 mm rings near 3.7 kHz as a bare bar (derived): A4 cannot be tuned.
		src := "name = \"bar\"\n[[string]]\nid = \"A4\"\nnote = \"A4\"\nlength_mm = 40\ncore = \"music_wire\"\ncore_mm = 3\n"
		_, err := Parse(mapFS(map[string]string{"b.toml": src}), "b.toml")
		var list *Errors
		if !errors.As(err, &list) || len(list.List) != 1 || !strings.Contains(list.List[0].Want, "cannot be reached on this string") {
			t.Fatalf("Parse: %v; want one error saying the target cannot be reached", err)
		}
	})
}
