package main

import (
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"

	"taut/pitch/note"
)

// measureWriter prints measured notes as an aligned table or as JSON lines.
type measureWriter struct {
	w         io.Writer
	opts      measureOptions
	fileWidth int
	header    bool
	enc       *json.Encoder
}

func newMeasureWriter(w io.Writer, opts measureOptions, files []string) *measureWriter {
	mw := &measureWriter{w: w, opts: opts, fileWidth: len("file"), enc: json.NewEncoder(w)}
	for _, f := range files {
		mw.fileWidth = max(mw.fileWidth, min(len(f), 48))
	}
	return mw
}

// noteJSON is one line of `taut measure --json`. Its field names are a stable format.
type noteJSON struct {
	File          string        `json:"file"`
	Channel       int           `json:"channel"` // 1-based; 0 = all channels mixed (--mix)
	OnsetS        float64       `json:"onset_s"`
	Note          string        `json:"note"`  // nearest 12-TET note to the first partial
	Cents         float64       `json:"cents"` // first partial against that note
	RefHz         float64       `json:"ref_hz"`
	FundamentalHz float64       `json:"fundamental_hz"` // measured first partial
	F0Hz          float64       `json:"f0_hz"`          // fitted ideal f0
	Inharmonicity float64       `json:"inharmonicity"`  // fitted B
	Clarity       float64       `json:"clarity"`
	LevelDB       float64       `json:"level_db"`
	Partials      []partialJSON `json:"partials"`
}

type partialJSON struct {
	N  int     `json:"n"`
	Hz float64 `json:"hz"`
	DB float64 `json:"db"`
}

// noPitchJSON is the line for a note the analyser could not measure.
type noPitchJSON struct {
	File    string  `json:"file"`
	Channel int     `json:"channel"`
	OnsetS  float64 `json:"onset_s"`
	Error   string  `json:"error"`
}

func (mw *measureWriter) write(r fileResult) error {
	for _, n := range r.notes {
		var err error
		if mw.opts.json {
			err = mw.writeJSON(r.file, n)
		} else {
			err = mw.writeRow(r.file, n)
		}
		if err != nil {
			return err
		}
	}
	return nil
}

func (mw *measureWriter) writeJSON(file string, n measuredNote) error {
	if n.err != nil {
		return mw.enc.Encode(noPitchJSON{File: file, Channel: n.channel, OnsetS: n.onsetS, Error: n.err.Error()})
	}
	midi, cents := note.Nearest(n.note.FundamentalHz, mw.opts.refHz)
	parts := make([]partialJSON, len(n.note.Partials))
	for i, p := range n.note.Partials {
		parts[i] = partialJSON{N: p.N, Hz: p.Hz, DB: p.DB}
	}
	return mw.enc.Encode(noteJSON{
		File: file, Channel: n.channel, OnsetS: n.onsetS, Note: note.Name(midi), Cents: cents, RefHz: mw.opts.refHz,
		FundamentalHz: n.note.FundamentalHz, F0Hz: n.note.F0Hz, Inharmonicity: n.note.B,
		Clarity: n.note.Clarity, LevelDB: n.note.LevelDB, Partials: parts,
	})
}

func (mw *measureWriter) writeRow(file string, n measuredNote) error {
	if !mw.header {
		mw.header = true
		if _, err := fmt.Fprintf(mw.w, "%-*s  %3s  %8s  %-4s  %7s  %10s  %10s  %9s  %8s  %7s\n", mw.fileWidth,
			"file", "ch", "onset_s", "note", "cents", "f1_hz", "f0_hz", "B", "partials", "clarity"); err != nil {
			return err
		}
	}
	ch := "mix"
	if n.channel > 0 {
		ch = strconv.Itoa(n.channel)
	}
	if n.err != nil {
		_, err := fmt.Fprintf(mw.w, "%-*s  %3s  %8.3f  no pitch: %v\n", mw.fileWidth, file, ch, n.onsetS, n.err)
		return err
	}
	midi, cents := note.Nearest(n.note.FundamentalHz, mw.opts.refHz)
	if math.Abs(cents) < 0.005 {
		cents = 0 // print +0.00, not -0.00
	}
	_, err := fmt.Fprintf(mw.w, "%-*s  %3s  %8.3f  %-4s  %+7.2f  %10.4f  %10.4f  %9.2e  %8d  %7.3f\n", mw.fileWidth,
		file, ch, n.onsetS, note.Name(midi), cents, n.note.FundamentalHz, n.note.F0Hz, n.note.B,
		len(n.note.Partials), n.note.Clarity)
	return err
}
