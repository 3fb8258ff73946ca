// Package configs holds the demo instrument configs and embeds them, so that
// `taut demo` runs without files on disk: instrument.Parse(configs.FS, "harp36.toml").
package configs

import "embed"

// FS holds every config and string table in this directory.
//
//go:embed *.toml *.csv
var FS embed.FS
