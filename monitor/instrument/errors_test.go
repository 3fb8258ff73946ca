package instrument

import (
	"errors"
	"os"
	"strings"
	"testing"
)

// TestParse_BrokenFiles checks that each broken file gives one clear error naming
// the file, line, field and what was expected.
func TestParse_BrokenFiles(t *testing.T) {
	for _, c := range []struct {
		name, file string
		line       int
		field      string
		want       string
	}{
		{"NegativeLength", "negative_length.toml", 6, "string#1.length_mm", "positive speaking length"},
		{"UnknownMaterial", "unknown_material.toml", 7, "string#1.core", `unknown material (did you mean "music_wire"?)`},
		{"MissingColumn", "missing_column.csv", 1, "header", "missing column; want core_mm"},
		{"WrongUnit", "wrong_unit.csv", 1, "column 3", `unit not accepted (the unit is part of the name); want one of "length_in", "length_m", "length_mm"`},
		{"WrongUnitInline", "inline_unit.toml", 6, "string#1.length_cm", `unit not accepted (the unit is part of the name); want one of "length_in"`},
		{"DuplicateID", "duplicate_id.csv", 4, "id (row 3)", "duplicate id (first used at testdata/bad/duplicate_id.csv:2)"},
		{"WrapWithoutCore", "wrap_without_core.csv", 3, "row 2", "wrap without core"},
		{"AboveBreakingPitch", "above_breaking.toml", 6, "string#1.note", "above the breaking pitch 670.74 Hz of this string (first partials; ideal-string f0 1046.46 Hz against 670.67 Hz"},
		{"UnknownKey", "unknown_key.toml", 4, "listen.tolerence_cents", `unknown key in [listen] (did you mean "tolerance_cents"?)`},
		{"UpperCaseKey", "upper_case.toml", 4, "listen.Margin_Warn", `keys are lower case; want "margin_warn"`},
		{"UnknownColumn", "unknown_column.csv", 1, "column 3", `unknown column (did you mean "length_mm"?)`},
		{"Margins", "margins.toml", 5, "listen.margin_alarm", "margin_alarm 0.75 must be above margin_warn 0.80"},
		{"PulseOverMax", "pulse.toml", 4, "exciter.pulse", "pulse 80ms is longer than max_pulse 50ms"},
		{"Syntax", "syntax.toml", 4, "", "TOML syntax"},
		{"BadNote", "bad_note.toml", 5, "string#1.note", "want a note name"},
		{"ShortRow", "short_row.csv", 4, "row 2", "3 cells; want 5"},
		{"ExciterNoPins", "exciter_no_pins.toml", 4, "exciter.enabled", "no string has an exciter_pin"},
		{"PinTwice", "pin_twice.toml", 8, "lamps.lamp#2.pin", "pin already used by lamp alarm"},
		{"TargetFarFromNote", "target_far.toml", 6, "string#1.target_hz", "+237 cents from C4"},
	} {
		t.Run(c.name, func(t *testing.T) {
			cfgFile := strings.TrimSuffix(strings.TrimSuffix(c.file, ".csv"), ".toml") + ".toml"
			cfg, err := Load("testdata/bad/" + cfgFile)
			if cfg != nil {
				t.Error("Load returned a config with its error")
			}
			var list *Errors
			if !errors.As(err, &list) {
				t.Fatalf("Load: %v, want *Errors", err)
			}
			if len(list.List) != 1 {
				t.Errorf("%d errors, want 1:\n%v", len(list.List), err)
			}
			fe := list.List[0]
			if fe.File != "testdata/bad/"+c.file || fe.Line != c.line || fe.Field != c.field || !strings.Contains(fe.Want, c.want) {
				t.Errorf("got %s:%d field %q want %q\nwant %s:%d field %q containing %q",
					fe.File, fe.Line, fe.Field, fe.Want, "testdata/bad/"+c.file, c.line, c.field, c.want)
			}
		})
	}
}

func TestParse_AllErrorsAtOnce(t *testing.T) {
	cfg, err := Load("testdata/bad/wrong_type.toml")
	var list *Errors
	if cfg != nil || !errors.As(err, &list) {
		t.Fatalf("Load = %v, %v; want *Errors", cfg, err)
	}
	want := []struct {
		line  int
		field string
		value string
	}{
		{2, "reference_hz", `"four-forty"`},
		{5, "journal.fsync_interval", "5"},
		{8, "lamps.required", `"yes"`},
	}
	if len(list.List) != len(want) {
		t.Fatalf("%d errors, want %d:\n%v", len(list.List), len(want), err)
	}
	for i, w := range want {
		fe := list.List[i]
		if fe.Line != w.line || fe.Field != w.field || fe.Value != w.value || fe.Want == "" {
			t.Errorf("error %d = %+v, want line %d field %s value %s", i, *fe, w.line, w.field, w.value)
		}
	}
	// errors.As reaches each FieldError.
	var fe *FieldError
	if !errors.As(err, &fe) || fe.Field != "reference_hz" {
		t.Errorf("errors.As(*FieldError) = %v", fe)
	}
	msg := err.Error()
	if !strings.HasPrefix(msg, "instrument: 3 errors in config:") ||
		!strings.Contains(msg, `testdata/bad/wrong_type.toml:8: lamps.required = "yes": want true or false`) {
		t.Errorf("Error() =\n%s", msg)
	}
}

func TestParse_ManyStringErrors(t *testing.T) {
	// Every bad cell of every row is reported in one run, in line order.
	csv := "id,note,length_mm,core,core_mm,wrap2,wrap2_mm\n" +
		"A,C4,-1,music_wire,1.0,,\n" +
		"B,C4,620,music_wire,abc,,\n" +
		"C,C4,620,music_wire,1.0,copper,0.5\n" +
		"D,Q4,620,nylonn,1.0,,\n"
	fsys := mapFS(map[string]string{
		"x.toml": "name = \"x\"\nstring_table = \"x.csv\"\n",
		"x.csv":  csv,
	})
	_, err := Parse(fsys, "x.toml")
	var list *Errors
	if !errors.As(err, &list) {
		t.Fatalf("Parse: %v", err)
	}
	wantLines := []int{2, 3, 4, 5, 5}
	if len(list.List) != len(wantLines) {
		t.Fatalf("%d errors, want %d:\n%v", len(list.List), len(wantLines), err)
	}
	for i, l := range wantLines {
		if list.List[i].Line != l || list.List[i].File != "x.csv" {
			t.Errorf("error %d at %s:%d, want x.csv:%d", i, list.List[i].File, list.List[i].Line, l)
		}
	}
}

func TestParse_Unreadable(t *testing.T) {
	_, err := Load("testdata/bad/no_such_file.toml")
	var list *Errors
	if err == nil || errors.As(err, &list) || !errors.Is(err, os.ErrNotExist) {
		t.Errorf("Load(missing) = %v; want a wrapped not-exist error", err)
	}
}

func TestSuggest(t *testing.T) {
	keys := knownKeys["listen"]
	for in, want := range map[string]string{
		"tolerence_cents": `"tolerance_cents"`,
		"margin_alrm":     `"margin_alarm"`,
		"zzzzzz":          "",
	} {
		got := suggest(in, keys)
		if (want == "") != (got == "") || !strings.Contains(got, want) {
			t.Errorf("suggest(%q) = %q, want %s", in, got, want)
		}
	}
}
