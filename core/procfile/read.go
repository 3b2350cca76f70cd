package procfile

import (
	"bytes"
	"encoding/json"
	"errors"
	"io"
	"strconv"
)

// MaxBytes is the largest process file Read accepts (a fitted process
// with bins is a few kilobytes).
const MaxBytes = 1 << 20

type fileJSON struct {
	Format  *string            `json:"format"`
	Version *int               `json:"version"`
	Name    string             `json:"name"`
	Title   string             `json:"title"`
	Base    string             `json:"base"`
	VDD     float64            `json:"vdd"`
	N       map[string]float64 `json:"n"`
	P       map[string]float64 `json:"p"`
	NBins   []binJSON          `json:"n_bins"`
	PBins   []binJSON          `json:"p_bins"`
	NSpread map[string]float64 `json:"n_spread"`
	PSpread map[string]float64 `json:"p_spread"`
	Source  map[string]struct {
		File        string `json:"file"`
		Fingerprint string `json:"fingerprint"`
		Points      int    `json:"points"`
	} `json:"source"`
	Fit map[string]json.RawMessage `json:"fit"`
}

type binJSON struct {
	L      float64            `json:"l"`
	Params map[string]float64 `json:"params"`
}

// Read parses a process file and checks it (see File.Check). A syntax
// error names its line and column; any other problem names the field.
func Read(data []byte) (File, error) {
	if len(data) > MaxBytes {
		return File{}, &Error{Message: "the file is " + strconv.Itoa(len(data)) + " bytes; a process file is at most " + strconv.Itoa(MaxBytes)}
	}
	var j fileJSON
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&j); err != nil {
		return File{}, jsonError(data, err)
	}
	switch {
	case j.Format == nil || *j.Format != Format:
		return File{}, &Error{Field: "format", Message: "not a Stagewright process file (want \"format\": \"" + Format + "\")"}
	case j.Version == nil || *j.Version != Version:
		return File{}, &Error{Field: "version", Message: "this build reads process files of version " + strconv.Itoa(Version)}
	}
	f := File{Name: j.Name, Title: j.Title, Base: j.Base, VDD: j.VDD}
	for _, s := range []struct {
		pol    string
		side   *Side
		params map[string]float64
		bins   []binJSON
		spread map[string]float64
	}{{"n", &f.N, j.N, j.NBins, j.NSpread}, {"p", &f.P, j.P, j.PBins, j.PSpread}} {
		if len(s.spread) > 0 {
			s.side.Spread = s.spread
		}
		if len(s.params) > 0 {
			s.side.Params = s.params
		}
		for _, b := range s.bins {
			s.side.Bins = append(s.side.Bins, Bin{L: b.L, Params: b.Params})
		}
		if src, ok := j.Source[s.pol]; ok {
			s.side.Source = &Source{File: src.File, Fingerprint: src.Fingerprint, Points: src.Points}
		}
		if rep, ok := j.Fit[s.pol]; ok {
			s.side.Report = []byte(rep)
		}
	}
	for pol := range j.Source {
		if pol != "n" && pol != "p" {
			return File{}, &Error{Field: "source." + pol, Message: "give n or p"}
		}
	}
	for pol := range j.Fit {
		if pol != "n" && pol != "p" {
			return File{}, &Error{Field: "fit." + pol, Message: "give n or p"}
		}
	}
	if err := f.Check(); err != nil {
		return File{}, err
	}
	return f, nil
}

// jsonError turns a decoding error into one that names the line and column
// or the field.
func jsonError(data []byte, err error) error {
	var syn *json.SyntaxError
	var typ *json.UnmarshalTypeError
	switch {
	case errors.As(err, &syn):
		line, col := lineColumn(data, syn.Offset)
		return &Error{Message: "line " + strconv.Itoa(line) + ", column " + strconv.Itoa(col) + ": " + syn.Error()}
	case errors.As(err, &typ):
		return &Error{Field: typ.Field, Message: "expected a " + typ.Type.String() + ", found a JSON " + typ.Value}
	case errors.Is(err, io.EOF) || errors.Is(err, io.ErrUnexpectedEOF):
		return &Error{Message: "the file is empty or cut short"}
	}
	return &Error{Message: err.Error()}
}

// lineColumn returns the 1-based line and column of byte offset off (the
// column counts bytes).
func lineColumn(data []byte, off int64) (line, col int) {
	if off > int64(len(data)) {
		off = int64(len(data))
	}
	if off < 1 {
		off = 1
	}
	before := data[:off-1]
	line = bytes.Count(before, []byte{'\n'}) + 1
	col = int(off) - (bytes.LastIndexByte(before, '\n') + 1)
	return line, col
}
