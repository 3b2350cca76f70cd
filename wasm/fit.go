package main

import (
	"errors"
	"slices"
	"strings"

	"stagewright/core/chardata"
	"stagewright/core/design"
	"stagewright/core/device"
	"stagewright/core/extract"
	"stagewright/core/jsonenc"
	"stagewright/core/units"
)

// The "Your process" panel's method: a fit of the model to the user's
// characterization file, run as a job like Monte Carlo and sizing.
//
//	fitStart(csvText, options) {result: {run, total}}   (chardata.Read + extract.Fit)
//
// options is a short fragment-like string, "pol=n&base=d180&w=10u&l=&temp=27"
// (an empty value is as if the key were absent), so the engine needs no
// JSON reader. The finished job's result is the fit object
// (extract.Result.AppendJSON) with two members added: "base", the process
// the fit started from, and "table", a summary of the file (points,
// lengths, widths, the ranges of VGS, VDS and VBS in the n-channel sense,
// temperatures, the optional columns and the file's fingerprint).
//
// Errors: a file that cannot be read is code "data" with key "file" and the
// reader's message, which names the line and the column; a table that
// cannot be fitted is code "analysis" with key "file"; a bad option is
// code "request" with the option's name as key.

// CodeData is the error code of a characterization file that cannot be read.
const CodeData = "data"

// fitOptions are the options of one fitStart call.
type fitOptions struct {
	read chardata.Options
	base string
}

// parseFitOptions reads the options string of fitStart.
func parseFitOptions(s string) (fitOptions, *ErrorInfo) {
	o := fitOptions{base: "d180"}
	bad := func(key, msg string) (fitOptions, *ErrorInfo) {
		return fitOptions{}, &ErrorInfo{Code: CodeRequest, Key: key, Message: "fitStart: option " + key + ": " + msg}
	}
	polGiven := false
	for _, pair := range strings.Split(s, "&") {
		if pair == "" {
			continue
		}
		key, value, _ := strings.Cut(pair, "=")
		if value == "" && key != "pol" && key != "base" {
			continue
		}
		switch key {
		case "pol":
			pol, err := device.ParsePolarity(value)
			if err != nil {
				return bad(key, "give n or p (the device type of the file, checked against its signs)")
			}
			o.read.Pol, polGiven = pol, true
		case "base":
			if !design.IsProcess(value) { // the process list comes through core/design, as schema's
				return bad(key, quoteShort(value)+" is not a built-in process (give one of "+strings.Join(design.Processes(), ", ")+")")
			}
			o.base = value
		case "w", "l", "temp":
			v, err := units.Parse(value)
			if err != nil {
				return bad(key, quoteShort(value)+": "+err.Error())
			}
			switch {
			case key == "temp":
				if !(v >= -60 && v <= 200) {
					return bad(key, units.Exact(v)+" °C outside -60 … 200 °C")
				}
				o.read.TempC, o.read.TempGiven = v, true
			case !(v > 0 && v < 1e-3):
				return bad(key, units.Exact(v)+" m is not a device size (give e.g. 10u or 180n)")
			case key == "w":
				o.read.W = v
			default:
				o.read.L = v
			}
		default:
			return bad(key, "unknown (known: pol, base, w, l, temp)")
		}
	}
	if !polGiven {
		return bad("pol", "missing: say whether the file is of an n-type or a p-type device")
	}
	return o, nil
}

func startFit(method string, args []Arg) Response {
	if len(args) != 2 || args[0].Kind != "string" || args[1].Kind != "string" {
		return requestError("%s expects two string arguments (the file's text and the options), got %s", method, describe(args))
	}
	text := args[0].Str
	if len(text) > chardata.MaxBytes {
		return Response{Error: &ErrorInfo{Code: CodeData, Key: "file", Message: "the file is over 50 MB, the most a data file may be"}}
	}
	o, bad := parseFitOptions(args[1].Str)
	if bad != nil {
		return Response{Error: bad}
	}
	pr, _ := device.Builtin(o.base)
	// The file is read in the first step, so a big file's reading is not
	// a call of its own that holds the worker.
	return startJob("fit", 0, func(progress func(done, total int) bool) (any, error) {
		table, err := chardata.Read([]byte(text), o.read)
		if err != nil {
			return nil, err
		}
		// Fit's progress counts the iterations of each least-squares run
		// from 1; the job reports them summed over the runs, which only
		// rises. The total is not known in advance (it is 0).
		iterations, last := 0, 0
		res, err := extract.Fit(table, extract.Options{
			Pol: o.read.Pol, Base: pr.Params(o.read.Pol), TNom: pr.TNom, GDSWeight: extract.DefaultGDSWeight, Bins: true,
		}, func(done, _ int) bool {
			if done > last {
				iterations += done - last
			} else {
				iterations += done
			}
			last = done
			return progress(iterations, 0)
		})
		if err != nil {
			return nil, err
		}
		return fitAnswer{res: res, raw: appendFitJSON(nil, res, table, o.base)}, nil
	})
}

// fitAnswer is the finished fit: its JSON, and the result for jobDone.
type fitAnswer struct {
	res extract.Result
	raw jsonenc.Raw
}

// MarshalJSON returns the fit object.
func (a fitAnswer) MarshalJSON() ([]byte, error) { return a.raw, nil }

// fitErrorInfo says what a failed fit job answers: code "data" for a file
// that cannot be read, "analysis" for a table that cannot be fitted, both
// with key "file"; ok is false for any other error.
func fitErrorInfo(err error) (info *ErrorInfo, ok bool) {
	var de *chardata.Error
	if errors.As(err, &de) {
		return &ErrorInfo{Code: CodeData, Key: "file", Message: err.Error()}, true
	}
	var fe *extract.Error
	if errors.As(err, &fe) {
		return &ErrorInfo{Code: CodeAnalysis, Key: "file", Message: err.Error()}, true
	}
	return nil, false
}

// tableSummary describes a characterization table for the page.
type tableSummary struct {
	Points      int        `json:"points"`
	Lengths     []float64  `json:"lengths"`
	Widths      []float64  `json:"widths"`
	VGS         [2]float64 `json:"vgs"` // V, lowest and highest, n-channel sense
	VDS         [2]float64 `json:"vds"`
	VBS         [2]float64 `json:"vbs"`
	ID          [2]float64 `json:"id"` // A
	Temps       []float64  `json:"temps"`
	HasGM       bool       `json:"has_gm"`
	HasGDS      bool       `json:"has_gds"`
	HasCGG      bool       `json:"has_cgg"`
	Fingerprint string     `json:"fingerprint"`
}

// maxListed is how many distinct lengths, widths or temperatures the
// summary lists; a table with more is summed up by its range.
const maxListed = 32

func summarize(t chardata.Table) tableSummary {
	s := tableSummary{Points: len(t.Points), HasGM: t.HasGM, HasGDS: t.HasGDS, HasCGG: t.HasCGG, Fingerprint: t.Fingerprint}
	span := func(r *[2]float64, v float64, first bool) {
		if first || v < r[0] {
			r[0] = v
		}
		if first || v > r[1] {
			r[1] = v
		}
	}
	add := func(list []float64, v float64) []float64 {
		if i, found := slices.BinarySearch(list, v); !found {
			list = slices.Insert(list, i, v)
		}
		return list
	}
	for i, p := range t.Points {
		span(&s.VGS, p.VGS, i == 0)
		span(&s.VDS, p.VDS, i == 0)
		span(&s.VBS, p.VBS, i == 0)
		span(&s.ID, p.ID, i == 0)
		s.Lengths = add(s.Lengths, p.L)
		s.Widths = add(s.Widths, p.W)
		s.Temps = add(s.Temps, p.TempC)
	}
	for _, l := range []*[]float64{&s.Lengths, &s.Widths, &s.Temps} {
		if len(*l) > maxListed {
			*l = []float64{(*l)[0], (*l)[len(*l)-1]}
		}
		if *l == nil {
			*l = []float64{}
		}
	}
	return s
}

// appendFitJSON appends the fit object with "base" and "table" added
// before its closing brace.
func appendFitJSON(b []byte, res extract.Result, t chardata.Table, base string) []byte {
	fit := res.AppendJSON(nil)
	b = append(b, fit[:len(fit)-1]...)
	b = append(b, `,"base":`...)
	b = jsonenc.AppendString(b, base)
	sum, err := jsonenc.Marshal(summarize(t))
	if err != nil { // a non-finite number, which the reader does not let through
		sum = []byte("null")
	}
	b = append(b, `,"table":`...)
	b = append(b, sum...)
	return append(b, '}')
}
