package instrument

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const pathsCSV = "id,note,length_mm,core,core_mm\nC4,C4,620,music_wire,1.0\n"

// TestLoad_ErrorsNameThePath: a config that cannot be read is named as the user gave it,
// not by its last element (os.DirFS used to say "open x.toml" for /tmp/x.toml).
func TestLoad_ErrorsNameThePath(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct {
		name, path, want string
		notExist         bool
	}{
		{"MissingAbsolute", filepath.Join(dir, "nonexist.toml"), "open " + filepath.Join(dir, "nonexist.toml") + ":", true},
		{"MissingRelative", "testdata/bad/no_such_file.toml", "open testdata/bad/no_such_file.toml:", true},
		{"Directory", dir, "read " + dir + ": is a directory", false},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := Load(c.path)
			var list *Errors
			if err == nil || errors.As(err, &list) || !strings.Contains(err.Error(), c.want) {
				t.Fatalf("Load(%q) = %v; want a plain error containing %q", c.path, err, c.want)
			}
			if c.notExist != errors.Is(err, os.ErrNotExist) {
				t.Errorf("errors.Is(err, os.ErrNotExist) = %v", !c.notExist)
			}
		})
	}
}

// TestLoad_StringTablePaths: from disk a string table may be named relative to the
// config's directory (also above it) or by an absolute path; errors name the file as
// it was resolved.
func TestLoad_StringTablePaths(t *testing.T) {
	dir := t.TempDir()
	write := func(name, data string) string {
		t.Helper()
		p := filepath.Join(dir, name)
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte(data), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	abs := write("tables/abs.csv", pathsCSV)
	write("tables/up.csv", pathsCSV)
	for _, c := range []struct {
		name, table string
	}{
		{"Sibling", "sib.csv"},
		{"AboveConfigDir", "../tables/up.csv"},
		{"Absolute", abs},
	} {
		t.Run(c.name, func(t *testing.T) {
			write("cfg/sib.csv", pathsCSV)
			cfgPath := write("cfg/"+c.name+".toml", "name = \"paths\"\nstring_table = \""+filepath.ToSlash(c.table)+"\"\n")
			cfg, err := Load(cfgPath)
			if err != nil {
				t.Fatal(err)
			}
			if len(cfg.Instrument.Strings) != 1 || cfg.Path != cfgPath {
				t.Errorf("%d strings, Path %q", len(cfg.Instrument.Strings), cfg.Path)
			}
		})
	}
	t.Run("MissingNamesResolvedPath", func(t *testing.T) {
		cfgPath := write("cfg/missing.toml", "name = \"paths\"\nstring_table = \"gone.csv\"\n")
		_, err := Load(cfgPath)
		var list *Errors
		if !errors.As(err, &list) || len(list.List) != 1 {
			t.Fatalf("Load: %v; want one error", err)
		}
		fe := list.List[0]
		want := "cannot read the string table " + filepath.Join(dir, "cfg", "gone.csv")
		if fe.File != cfgPath || fe.Line != 2 || fe.Field != "string_table" || !strings.Contains(fe.Want, want) {
			t.Errorf("error %v; want %s:2 string_table containing %q", fe, cfgPath, want)
		}
	})
	t.Run("RowErrorsNameAbsoluteTable", func(t *testing.T) {
		bad := write("tables/bad.csv", "id,note,length_mm,core,core_mm\nC4,C4,-1,music_wire,1.0\n")
		cfgPath := write("cfg/bad.toml", "name = \"paths\"\nstring_table = \""+filepath.ToSlash(bad)+"\"\n")
		_, err := Load(cfgPath)
		var list *Errors
		if !errors.As(err, &list) || len(list.List) != 1 || list.List[0].File != bad || list.List[0].Line != 2 {
			t.Fatalf("Load: %v; want one error at %s:2", err, bad)
		}
	})
}

// TestParse_StringTableOutsideFS: inside an fs.FS (the embedded configs) a table must be
// named relative to the config and stay inside the file system.
func TestParse_StringTableOutsideFS(t *testing.T) {
	for _, c := range []struct {
		name, table, want string
	}{
		{"Absolute", "/etc/strings.csv", "an absolute path cannot be read here"},
		{"Above", "../strings.csv", "the path leaves the config's file system"},
	} {
		t.Run(c.name, func(t *testing.T) {
			fsys := mapFS(map[string]string{"i.toml": "name = \"x\"\nstring_table = \"" + c.table + "\"\n"})
			_, err := Parse(fsys, "i.toml")
			var list *Errors
			if !errors.As(err, &list) || len(list.List) != 1 || !strings.Contains(list.List[0].Want, c.want) {
				t.Fatalf("Parse: %v; want one error containing %q", err, c.want)
			}
		})
	}
}
