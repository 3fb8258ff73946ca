package instrument

import (
	"io/fs"
	"path"
	"strings"
	"testing"

	"taut/configs"
)

// TestConfigs parses and validates every config in configs/, from disk and from the
// embedded copy, and checks the demo instruments against the trade's usual ranges.
func TestConfigs(t *testing.T) {
	names, err := fs.Glob(configs.FS, "*.toml")
	if err != nil || len(names) < 2 {
		t.Fatalf("configs: %v %v, want at least two configs", names, err)
	}
	for _, name := range names {
		t.Run(strings.TrimSuffix(name, ".toml"), func(t *testing.T) {
			disk, err := Load(path.Join("../../configs", name))
			if err != nil {
				t.Fatal(err)
			}
			cfg, err := Parse(configs.FS, name)
			if err != nil {
				t.Fatal(err)
			}
			if len(cfg.Instrument.Strings) != len(disk.Instrument.Strings) || len(cfg.Instrument.Strings) == 0 {
				t.Errorf("embedded %d strings, disk %d", len(cfg.Instrument.Strings), len(disk.Instrument.Strings))
			}
			switch name {
			case "harp36.toml":
				checkHarp(t, cfg)
			case "upright.toml":
				checkUpright(t, cfg)
			}
		})
	}
}

// checkHarp: reference-values §4.2 gives single harp-string tensions of roughly
// 100–350 N (from memory, low confidence; concert harp). A lever harp's top treble is
// lighter, so the floor here is 50 N (engineering judgement, no source). Total load
// for a 47-string concert harp is about 10 kN (§4.2, seen); a 36-string lever harp
// should carry less, but more than 2 kN (judgement).
func checkHarp(t *testing.T, cfg *Config) {
	in := cfg.Instrument
	if len(in.Strings) != 36 {
		t.Errorf("%d strings, want 36", len(in.Strings))
	}
	var total float64
	cores := map[string]bool{}
	for _, s := range in.Strings {
		tn := tensionAtTarget(t, s)
		total += tn
		cores[s.Phys.Core.Material.Name+map[bool]string{true: "+wrap"}[s.Phys.Wound()]] = true
		if tn < 50 || tn > 350 {
			t.Errorf("%s: tension %.0f N outside 50–350 N", s.ID, tn)
		}
		if m := s.Phys.Margin(tn); m >= cfg.Listen.MarginWarn || m < 0.20 {
			t.Errorf("%s: margin %.0f %%, want 20 %% to below margin_warn", s.ID, 100*m)
		}
	}
	if total < 2000 || total > 10000 {
		t.Errorf("total %.0f N outside 2–10 kN", total)
	}
	for _, want := range []string{"nylon", "gut", "music_wire+wrap"} {
		if !cores[want] {
			t.Errorf("no %s strings; want nylon treble, gut middle, wound bass", want)
		}
	}
}

// checkUpright: reference-values §4.1 (trade figure from a piano dealer's web page): one
// piano string carries 130–220 lbf (580–980 N); plain-wire margins along a scale run
// 24–70 % (reference-values §4.1, trade figure from a technicians' mailing list, short
// scales), the demo keeps to 30–70 %; bass strings "never intentionally… exceed 70 %"
// (reference-values §4.1, trade figure from a technicians' mailing list, 2008).
func checkUpright(t *testing.T, cfg *Config) {
	byNote := map[string]int{}
	layers := map[int]bool{}
	for _, s := range cfg.Instrument.Strings {
		byNote[s.Note]++
		layers[len(s.Phys.Wraps)] = true
		tn := tensionAtTarget(t, s)
		m := s.Phys.Margin(tn)
		if s.Phys.Wound() {
			if m > 0.70 {
				t.Errorf("%s: wound string margin %.0f %% above 70 %%", s.ID, 100*m)
			}
			continue
		}
		// reference-values §2.2 (Young 1952, seen; B derived): middle C plain wire has
		// B ≈ 3.5e-4, "about the same in all the pianos tested"; allow ±50 %.
		if b := s.Phys.Inharmonicity(tn); s.Note == "C4" && (b < 1.75e-4 || b > 5.25e-4) {
			t.Errorf("%s: predicted B %.2e, want ≈3.5e-4 ±50 %%", s.ID, b)
		}
		if tn < 580 || tn > 980 {
			t.Errorf("%s: plain-wire tension %.0f N outside 580–980 N", s.ID, tn)
		}
		if m < 0.30 || m > 0.70 {
			t.Errorf("%s: plain-wire margin %.0f %% outside 30–70 %%", s.ID, 100*m)
		}
	}
	for _, n := range []int{0, 1, 2} {
		if !layers[n] {
			t.Errorf("no string with %d wrap layers", n)
		}
	}
	if byNote["C4"] != 3 || byNote["A1"] != 2 || byNote["A0"] != 1 {
		t.Errorf("unisons C4 %d, A1 %d, A0 %d; want 3, 2, 1", byNote["C4"], byNote["A1"], byNote["A0"])
	}
}

// tensionAtTarget is the tension of a string whose first partial sounds its target
// (tension package doc, "Target pitch").
func tensionAtTarget(t *testing.T, s String) float64 {
	t.Helper()
	f0, err := s.Phys.F0ForFirstPartial(s.TargetHz)
	if err != nil {
		t.Fatalf("%s: %v", s.ID, err)
	}
	return s.Phys.Tension(f0)
}
