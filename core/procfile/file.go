package procfile

import (
	"errors"
	"math"
	"slices"
	"strconv"
	"strings"

	"stagewright/core/chardata"
	"stagewright/core/design"
	"stagewright/core/device"
	"stagewright/core/extract"
	"stagewright/core/jsonenc"
	"stagewright/core/units"
)

// Format is the value of a process file's "format" member.
const Format = "stagewright-process"

// Version is the process-file version this build writes and reads.
const Version = 1

// File is one user process.
type File struct {
	Name  string  // short name the user chose, e.g. "myfab180"
	Title string  // a line describing it
	Base  string  // built-in process it builds on
	VDD   float64 // V, nominal supply; 0 means the base's
	N, P  Side
}

// Side is one polarity of a process.
type Side struct {
	// Params are parameters by their device.ParamTable keys; a key that
	// is absent keeps the base process's value.
	Params map[string]float64
	Bins   []Bin // per-length sets, rising in L; empty when none

	// Spread holds the user's own manufacturing spread by the link's keys
	// (vtspread, mobspread, vtmatch, betamatch); an absent key keeps the
	// base process's, for corners and Monte Carlo.
	Spread map[string]float64
	Source *Source // the data the parameters were fitted to; nil when none
	Report []byte  // the fit report, JSON as extract.Result.AppendReportJSON writes it; nil when none
}

// Bin is the parameters of one channel length: the keys that differ from
// the polarity's Params.
type Bin struct {
	L      float64 // m
	Params map[string]float64
}

// Source identifies a characterization file.
type Source struct {
	File        string // the file's name as the user gave it
	Fingerprint string // chardata.Fingerprint of its bytes
	Points      int    // data points read
}

// Fit is one polarity's fit, to put in a file.
type Fit struct {
	Result extract.Result
	Table  chardata.Table
	File   string // the data file's name
}

// FromFits makes a process file on base from one fit per polarity (either
// may be missing). The fitted parameters of a polarity are all written, so
// the file reads without the base at hand; a polarity without a fit
// carries no parameters and keeps the base's.
func FromFits(name, title, base string, fits ...Fit) (File, error) {
	pr, ok := device.Builtin(base)
	if !ok {
		return File{}, &Error{Field: "base", Message: "unknown base process " + strconv.Quote(base) + " (give one of " + strings.Join(device.BuiltinNames(), ", ") + ")"}
	}
	f := File{Name: name, Title: title, Base: base, VDD: pr.VDD}
	for _, fit := range fits {
		side := &f.N
		if fit.Result.Pol == device.PMOS {
			side = &f.P
		}
		side.Params = paramsMap(fit.Result.Params, nil)
		for _, b := range fit.Result.Bins() {
			side.Bins = append(side.Bins, Bin{L: b.L, Params: paramsMap(b.Params, &fit.Result.Params)})
		}
		side.Source = &Source{File: fit.File, Fingerprint: fit.Table.Fingerprint, Points: len(fit.Table.Points)}
		side.Report = fit.Result.AppendReportJSON(nil)
	}
	if err := f.Check(); err != nil {
		return File{}, err
	}
	return f, nil
}

// paramsMap returns every parameter of p by key, or with a reference set
// only those that differ from it.
func paramsMap(p device.Params, ref *device.Params) map[string]float64 {
	m := map[string]float64{}
	for _, info := range device.ParamTable {
		v := *info.Field(&p)
		if ref != nil && v == *info.Field(ref) {
			continue
		}
		m[info.Key] = v
	}
	return m
}

// Fragment returns the design-fragment keys that make a design use the
// process: v=2 (the base version the file's parameters are given against),
// proc, vdd, then every parameter that differs from the base as an n.KEY or
// p.KEY override and every bin parameter as n.KEY@L, values written exactly.
func (f File) Fragment() string {
	pr, _ := device.Builtin(f.Base)
	b := []byte("v=" + strconv.Itoa(device.LatestVersion) + "&proc=" + f.Base)
	if f.VDD != 0 {
		b = append(b, "&vdd="...)
		b = units.AppendExact(b, f.VDD)
	}
	for _, s := range []struct {
		pol  string
		side *Side
		base device.Params
	}{{"n", &f.N, pr.N}, {"p", &f.P, pr.P}} {
		set := s.base
		for _, info := range device.ParamTable {
			v, ok := s.side.Params[info.Key]
			if !ok || v == *info.Field(&s.base) {
				continue
			}
			*info.Field(&set) = v
			b = appendKey(b, s.pol, info.Key, 0, v)
		}
		for _, bin := range s.side.Bins {
			for _, info := range device.ParamTable {
				if v, ok := bin.Params[info.Key]; ok && v != *info.Field(&set) {
					b = appendKey(b, s.pol, info.Key, bin.L, v)
				}
			}
		}
		for _, key := range spreadKeys {
			if v, ok := s.side.Spread[key]; ok {
				b = appendKey(b, s.pol, key, 0, v)
			}
		}
	}
	return string(b)
}

// spreadKeys are the keys of a Side's Spread, in the order Fragment
// writes them.
var spreadKeys = [...]string{"betamatch", "mobspread", "vtmatch", "vtspread"}

func appendKey(b []byte, pol, key string, l, v float64) []byte {
	b = append(b, '&')
	b = append(b, pol...)
	b = append(b, '.')
	b = append(b, key...)
	if l != 0 {
		b = append(b, '@')
		b = units.AppendExact(b, l)
	}
	b = append(b, '=')
	return units.AppendExact(b, v)
}

// Apply returns fragment on the file's process: the file's keys replace
// the fragment's proc, vdd and version, and its parameter keys join the
// fragment's own; an override the fragment already has (same key and
// length) keeps the fragment's value, since the user set it on purpose.
func Apply(fragment string, f File) string {
	fragment = strings.TrimPrefix(fragment, "#")
	have := map[string]bool{}
	var kept []string
	for _, pair := range strings.Split(fragment, "&") {
		if pair == "" {
			continue
		}
		key, _, _ := strings.Cut(pair, "=")
		switch key {
		case "v", "proc", "vdd":
			continue
		}
		have[key] = true
		kept = append(kept, pair)
	}
	out := []string{}
	for _, pair := range strings.Split(f.Fragment(), "&") {
		key, _, _ := strings.Cut(pair, "=")
		if !have[key] {
			out = append(out, pair)
		}
	}
	return strings.Join(append(out, kept...), "&")
}

// Check reports the first problem of the file, naming the field: a bad
// name, an unknown base, a supply, parameter or bin out of range.
func (f File) Check() error {
	switch {
	case f.Name == "" || len(f.Name) > 64 || strings.ContainsAny(f.Name, "&=#%\n\r\t"):
		return &Error{Field: "name", Message: "give a name of 1 … 64 characters without & = # % or line breaks"}
	case len(f.Title) > 200:
		return &Error{Field: "title", Message: "at most 200 characters"}
	}
	pr, ok := device.Builtin(f.Base)
	if !ok {
		return &Error{Field: "base", Message: "unknown base process " + strconv.Quote(f.Base) + " (give one of " + strings.Join(device.BuiltinNames(), ", ") + ")"}
	}
	if f.VDD != 0 && !(f.VDD >= 0.2 && f.VDD <= 5) {
		return &Error{Field: "vdd", Message: "supply " + units.Exact(f.VDD) + " V outside 200m … 5 V"}
	}
	for _, s := range []struct {
		pol  string
		side *Side
		base device.Params
	}{{"n", &f.N, pr.N}, {"p", &f.P, pr.P}} {
		set := s.base
		for key, v := range s.side.Params {
			info, old, ok := device.ParamByKey(key)
			if !ok || old {
				return &Error{Field: s.pol + "." + key, Message: "unknown parameter"}
			}
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return &Error{Field: s.pol + "." + key, Message: "not a finite number"}
			}
			*info.Field(&set) = v
		}
		if err := set.Validate(); err != nil {
			return &Error{Field: s.pol, Message: err.Error()}
		}
		for i, bin := range s.side.Bins {
			field := s.pol + "_bins[" + strconv.Itoa(i) + "]"
			if !(bin.L >= pr.LMin && bin.L <= pr.LMax) {
				return &Error{Field: field + ".l", Message: "length " + units.Exact(bin.L) + " m outside the base's " + units.Exact(pr.LMin) + " … " + units.Exact(pr.LMax) + " m"}
			}
			if i > 0 && !(bin.L > s.side.Bins[i-1].L) {
				return &Error{Field: field + ".l", Message: "bins must rise in length"}
			}
			bs := set
			for key, v := range bin.Params {
				info, old, ok := device.ParamByKey(key)
				if !ok || old || math.IsNaN(v) || math.IsInf(v, 0) {
					return &Error{Field: field + "." + key, Message: "unknown parameter or not a finite number"}
				}
				*info.Field(&bs) = v
			}
			if err := bs.Validate(); err != nil {
				return &Error{Field: field, Message: err.Error()}
			}
		}
		for key := range s.side.Spread {
			if !slices.Contains(spreadKeys[:], key) {
				return &Error{Field: s.pol + "_spread." + key, Message: "unknown spread figure (give " + strings.Join(spreadKeys[:], ", ") + ")"}
			}
		}
	}
	// The link form must open as it is: the design decoder holds every key
	// to its range (the spread figures among them).
	if _, err := design.Decode(f.Fragment()); err != nil {
		var fe *design.FragmentError
		if errors.As(err, &fe) && len(fe.Problems) > 0 {
			p := fe.Problems[0]
			field := p.Key
			if pol, key, ok := strings.Cut(p.Key, "."); ok && slices.Contains(spreadKeys[:], key) {
				field = pol + "_spread." + key
			}
			return &Error{Field: field, Message: p.Message}
		}
		return &Error{Message: err.Error()}
	}
	return nil
}

// AppendJSON appends the file, indented two spaces a level so that a user
// can read and diff it.
func (f File) AppendJSON(b []byte) []byte {
	b = append(b, "{\n  \"format\": "...)
	b = jsonenc.AppendString(b, Format)
	b = append(b, ",\n  \"version\": "...)
	b = strconv.AppendInt(b, Version, 10)
	for _, kv := range [...][2]string{{"name", f.Name}, {"title", f.Title}, {"base", f.Base}} {
		b = append(b, ",\n  \""+kv[0]+"\": "...)
		b = jsonenc.AppendString(b, kv[1])
	}
	b = append(b, ",\n  \"vdd\": "...)
	b = appendNumber(b, f.VDD)
	for _, s := range []struct {
		pol  string
		side *Side
	}{{"n", &f.N}, {"p", &f.P}} {
		b = append(b, ",\n  \""+s.pol+"\": "...)
		b = appendParams(b, s.side.Params)
		b = append(b, ",\n  \""+s.pol+"_bins\": ["...)
		for i, bin := range s.side.Bins {
			if i > 0 {
				b = append(b, ',')
			}
			b = append(b, "\n    {\"l\": "...)
			b = appendNumber(b, bin.L)
			b = append(b, ", \"params\": "...)
			b = appendParams(b, bin.Params)
			b = append(b, '}')
		}
		if len(s.side.Bins) > 0 {
			b = append(b, "\n  "...)
		}
		b = append(b, ']')
		if len(s.side.Spread) > 0 {
			b = append(b, ",\n  \""+s.pol+"_spread\": "...)
			b = appendParams(b, s.side.Spread)
		}
	}
	b = append(b, ",\n  \"source\": {"...)
	first := true
	for _, s := range []struct {
		pol  string
		side *Side
	}{{"n", &f.N}, {"p", &f.P}} {
		if s.side.Source == nil {
			continue
		}
		if !first {
			b = append(b, ',')
		}
		first = false
		b = append(b, "\n    \""+s.pol+"\": {\"file\": "...)
		b = jsonenc.AppendString(b, s.side.Source.File)
		b = append(b, ", \"fingerprint\": "...)
		b = jsonenc.AppendString(b, s.side.Source.Fingerprint)
		b = append(b, ", \"points\": "...)
		b = strconv.AppendInt(b, int64(s.side.Source.Points), 10)
		b = append(b, '}')
	}
	if !first {
		b = append(b, "\n  "...)
	}
	b = append(b, "},\n  \"fit\": {"...)
	first = true
	for _, s := range []struct {
		pol  string
		side *Side
	}{{"n", &f.N}, {"p", &f.P}} {
		if s.side.Report == nil {
			continue
		}
		if !first {
			b = append(b, ',')
		}
		first = false
		b = append(b, "\n    \""+s.pol+"\": "...)
		b = append(b, s.side.Report...)
	}
	if !first {
		b = append(b, "\n  "...)
	}
	return append(b, "}\n}\n"...)
}

func appendParams(b []byte, m map[string]float64) []byte {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	b = append(b, '{')
	for i, k := range keys {
		if i > 0 {
			b = append(b, ", "...)
		}
		b = jsonenc.AppendString(b, k)
		b = append(b, ": "...)
		b = appendNumber(b, m[k])
	}
	return append(b, '}')
}

// appendNumber writes v as the shortest decimal that reads back to the same
// float64 (JSON has no prefixes); a non-finite value, which Check rejects,
// is written as null.
func appendNumber(b []byte, v float64) []byte {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return append(b, "null"...)
	}
	return strconv.AppendFloat(b, v, 'g', -1, 64)
}

// Error is a problem with a process file, naming the field.
type Error struct {
	Field   string // JSON member, e.g. "n.thresh", "n_bins[1].l", "base"
	Message string
}

func (e *Error) Error() string {
	if e.Field == "" {
		return "process file: " + e.Message
	}
	return "process file: " + e.Field + ": " + e.Message
}
