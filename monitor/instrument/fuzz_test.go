package instrument

import (
	"errors"
	"os"
	"path/filepath"
	"testing"
)

const fuzzCSV = "id,note,section,length_mm,core,core_mm,wrap1,wrap1_mm\nA1,A1,bass,1200,music_wire,1.5,copper,1.0\nC4a,C4,tenor,620,music_wire,1.0,,\n"

// checkParsed fails on anything but a valid config or an *Errors list.
func checkParsed(t *testing.T, cfg *Config, err error) {
	var list *Errors
	switch {
	case err != nil && !errors.As(err, &list):
		t.Fatalf("error is not *Errors: %v", err)
	case err != nil && len(list.List) == 0:
		t.Fatal("empty *Errors")
	case err == nil && cfg == nil:
		t.Fatal("nil config without error")
	case err == nil:
		for _, s := range cfg.Instrument.Strings {
			if e := s.Phys.Validate(); e != nil || s.Phys.Margin(s.Phys.Tension(s.TargetHz)) >= 1 {
				t.Fatalf("string %s passed validation: %v", s.ID, e)
			}
		}
	}
}

func seedFiles(f *testing.F, pattern string) {
	files, _ := filepath.Glob(pattern)
	for _, name := range files {
		data, err := os.ReadFile(name)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(string(data))
	}
}

// FuzzParseTOML: no TOML file may panic the parser.
func FuzzParseTOML(f *testing.F) {
	seedFiles(f, "testdata/bad/*.toml")
	seedFiles(f, "../../configs/*.toml")
	f.Add(minimal)
	f.Fuzz(func(t *testing.T, src string) {
		fsys := mapFS(map[string]string{"f.toml": src, "s.csv": fuzzCSV, "harp36.csv": fuzzCSV, "upright.csv": fuzzCSV})
		cfg, err := Parse(fsys, "f.toml")
		checkParsed(t, cfg, err)
	})
}

// FuzzParseCSV: no string table may panic the parser.
func FuzzParseCSV(f *testing.F) {
	seedFiles(f, "testdata/bad/*.csv")
	seedFiles(f, "../../configs/*.csv")
	f.Add(fuzzCSV)
	f.Fuzz(func(t *testing.T, table string) {
		fsys := mapFS(map[string]string{"f.toml": "name = \"fuzz\"\nstring_table = \"s.csv\"\n", "s.csv": table})
		cfg, err := Parse(fsys, "f.toml")
		checkParsed(t, cfg, err)
	})
}
