package instrument

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"

	"github.com/BurntSushi/toml"
)

// rawFile mirrors the TOML file. Leaf values are decoded as `any` so that a value of
// the wrong type becomes one of many reported errors instead of stopping the decoder;
// the converters in value.go check them. Strings are decoded as maps because their
// keys are the same columns a CSV table has (columns.go).
type rawFile struct {
	Name        any                    `toml:"name"`
	ReferenceHz any                    `toml:"reference_hz"`
	StringTable any                    `toml:"string_table"`
	Materials   map[string]rawMaterial `toml:"materials"`
	String      []map[string]any       `toml:"string"`
	Listen      rawListen              `toml:"listen"`
	Journal     rawJournal             `toml:"journal"`
	HTTP        rawHTTP                `toml:"http"`
	Audio       rawAudio               `toml:"audio"`
	Lamps       rawLamps               `toml:"lamps"`
	Exciter     rawExciter             `toml:"exciter"`
}

// Load reads and validates the config file at path. Errors name the path as given.
// A CSV string table it names is read relative to the config file's directory, or
// from its own absolute path.
func Load(name string) (*Config, error) {
	data, err := os.ReadFile(name)
	if err != nil {
		return nil, fmt.Errorf("instrument: read config: %w", err) // *fs.PathError names the path
	}
	p := newParser(name, data)
	p.readTable = func(table string) (string, []byte, error) {
		file := table
		if !filepath.IsAbs(table) {
			file = filepath.Join(filepath.Dir(name), filepath.FromSlash(table))
		}
		data, err := os.ReadFile(file)
		return file, data, err
	}
	return p.parse(data)
}

// Parse reads and validates the config file name inside fsys; a CSV string table it
// names is resolved relative to name inside fsys and must stay inside fsys (no
// absolute path). Any problem in the file comes back as *Errors listing all of them;
// a file that cannot be read is a plain error.
func Parse(fsys fs.FS, name string) (*Config, error) {
	data, err := fs.ReadFile(fsys, name)
	if err != nil {
		return nil, fmt.Errorf("instrument: read config: %w", err)
	}
	p := newParser(name, data)
	p.readTable = func(table string) (string, []byte, error) {
		if path.IsAbs(table) || filepath.IsAbs(table) {
			return table, nil, errors.New("an absolute path cannot be read here (the config is read from an embedded " +
				"or virtual file system); want a path relative to the config's directory")
		}
		file := path.Join(path.Dir(name), table)
		if !fs.ValidPath(file) {
			return file, nil, errors.New("the path leaves the config's file system; want a path relative to the config's directory, inside it")
		}
		data, err := fs.ReadFile(fsys, file)
		return file, data, err
	}
	return p.parse(data)
}

func newParser(name string, data []byte) *parser {
	return &parser{file: name, loc: newLocator(string(data)), pinAt: map[string]pos{}}
}

// parse decodes and validates the config text.
func (p *parser) parse(data []byte) (*Config, error) {
	var raw rawFile
	md, err := toml.Decode(string(data), &raw)
	if err != nil {
		p.c.add(pos{file: p.file, line: tomlErrLine(err)}, nil, "%s", tomlErrText(err))
		return nil, p.c.err()
	}
	p.undecoded(md.Undecoded())
	p.upperCase(md.Keys())
	cfg := p.build(&raw)
	if len(p.c.list) > 0 {
		return nil, p.c.err()
	}
	cfg.Path = p.file
	return cfg, nil
}

// parser holds the state of one Load or Parse call.
type parser struct {
	file string // the config as named to Load or Parse; every message names it so
	loc  *locator
	c    collector
	// readTable reads a string table named in the config; file is its path as the
	// messages name it. An error is about the path or the read.
	readTable func(name string) (file string, data []byte, err error)

	pinAt map[string]pos // where each string's exciter_pin was written, by string id
}

// at returns the position of a TOML key path such as "listen.margin_warn".
func (p *parser) at(path string) pos {
	return pos{file: p.file, line: p.loc.line(path), field: path}
}

func (p *parser) build(raw *rawFile) *Config {
	cfg := &Config{}
	in := &cfg.Instrument
	in.Name = p.c.optString(p.at("name"), raw.Name, "")
	if strings.TrimSpace(in.Name) == "" {
		p.c.add(p.at("name"), raw.Name, "want the instrument's name, e.g. name = \"workshop harp\"")
	}
	in.ReferenceHz = p.c.optNumber(p.at("reference_hz"), raw.ReferenceHz, 440,
		"A4 in Hz between 350 and 500 (default 440, ISO 16)", between(350, 500))
	in.Materials = p.materials(raw.Materials)
	in.Strings = p.strings(raw, in)
	cfg.Listen = p.listen(&raw.Listen)
	cfg.Journal = p.journal(&raw.Journal)
	cfg.HTTP = p.http(&raw.HTTP)
	cfg.Audio = p.audio(&raw.Audio)
	cfg.Lamps = p.lamps(&raw.Lamps)
	cfg.Exciter = p.exciter(&raw.Exciter, in.Strings)
	p.checkPins(cfg)
	sort.SliceStable(p.c.list, func(i, j int) bool {
		a, b := p.c.list[i], p.c.list[j]
		if a.File != b.File {
			return a.File == p.file // the TOML file first, then its table
		}
		return a.Line < b.Line
	})
	return cfg
}

func between(lo, hi float64) func(float64) bool {
	return func(f float64) bool { return f >= lo && f <= hi }
}

func positive(f float64) bool { return f > 0 }

// knownKeys lists the keys accepted in each table, for unknown-key suggestions.
var knownKeys = map[string][]string{
	"":          {"name", "reference_hz", "string_table", "materials", "string", "listen", "journal", "http", "audio", "lamps", "exciter"},
	"materials": {"like", "density_kg_m3", "young_gpa", "strength_mpa", "basis"},
	"listen": {"steady_cents_per_hour", "tolerance_cents", "margin_warn", "margin_alarm", "jump_cents",
		"partial_shift", "rate_window", "quiet_after", "match_cents", "ambiguous_cents"},
	"journal":    {"dir", "fsync_interval", "segment_mb"},
	"http":       {"listen"},
	"audio":      {"input", "files", "device", "format", "rate_hz", "channels", "speed"},
	"lamps":      {"required", "lamp"},
	"lamps.lamp": {"name", "pin", "shows", "blink"},
	"exciter":    {"enabled", "interval", "pulse", "max_pulse", "listen", "quiet_hours"},
}

// undecoded reports every key the decoder did not use.
func (p *parser) undecoded(keys []toml.Key) {
	seen := map[string]int{}
	for _, k := range keys {
		table := strings.Join(k[:len(k)-1], ".")
		if len(k) >= 2 && k[0] == "materials" {
			table = "materials" // [materials.NAME] all share one key set
		}
		plain := strings.Join(k, ".")
		line := p.loc.nth(plain, seen[plain])
		seen[plain]++
		where := "the top level"
		if table != "" {
			where = "[" + table + "]"
		}
		p.c.add(pos{file: p.file, line: line, field: plain}, nil,
			"unknown key in %s%s", where, suggest(k[len(k)-1], knownKeys[table]))
	}
}

// upperCase reports keys written with capitals: the decoder matches struct fields
// without regard to case, but our keys are lower case everywhere.
func (p *parser) upperCase(keys []toml.Key) {
	seen := map[string]int{}
	for _, k := range keys {
		plain := strings.Join(k, ".")
		n := seen[plain]
		seen[plain]++
		last := k[len(k)-1]
		if len(k) == 2 && k[0] == "materials" || k[0] == "string" || last == strings.ToLower(last) {
			continue // material names and string columns are checked where they are read
		}
		p.c.add(pos{file: p.file, line: p.loc.nth(plain, n), field: plain}, nil,
			"keys are lower case; want %q", strings.ToLower(last))
	}
}

var lineRE = regexp.MustCompile(`line (\d+)`)

func tomlErrLine(err error) int {
	var pe toml.ParseError
	if errors.As(err, &pe) {
		return pe.Position.Line
	}
	if m := lineRE.FindStringSubmatch(err.Error()); m != nil {
		n, _ := strconv.Atoi(m[1])
		return n
	}
	return 0
}

// tomlErrText is the decoder's message without its own "toml: line N" prefix.
func tomlErrText(err error) string {
	var pe toml.ParseError
	if errors.As(err, &pe) {
		return "TOML syntax: " + pe.Message + "; want valid TOML"
	}
	msg := strings.TrimPrefix(err.Error(), "toml: ")
	return "TOML structure: " + msg + "; want the layout of the example configs"
}
