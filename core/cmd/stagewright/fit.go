package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"stagewright/core/chardata"
	"stagewright/core/device"
	"stagewright/core/extract"
	"stagewright/core/procfile"
	"stagewright/core/units"
)

const fitUsage = `usage: stagewright fit FILE -pol n|p [-base d180] [-w W] [-l L] [-temp 27] [-nobins] [-process NAME -o FILE.json]
  Fits the model to a transistor's characterization data (CSV with columns vgs, vds, id and
  optionally vbs, w, l, temp, gm, gds, cgg) and prints one JSON object: ok, pol, points, params
  (by their key names, SI units), fit (errors per region), findings, and fragment (the overrides
  to append to a design link). -w, -l and -temp give values the file has no column for.
  -process NAME -o FILE writes a process file; when FILE already holds a process of that
  name, the other polarity's parameters in it are kept (fit n, then p, into one file).
`

// cmdFit is `stagewright fit`.
func cmdFit(args []string, stdout, stderr io.Writer) int {
	file, vals, help, err := aidArgs(args, []string{"pol", "base", "w", "l", "temp", "process", "o"}, []string{"nobins"})
	if help {
		fmt.Fprint(stdout, fitUsage)
		return 0
	}
	if err != nil {
		fmt.Fprintf(stderr, "stagewright fit: %v\n%s", err, fitUsage)
		return 2
	}
	pol, err := device.ParsePolarity(vals["pol"])
	if err != nil {
		fmt.Fprintf(stderr, "stagewright fit: -pol must be n or p (the data's polarity, checked against the file)\n%s", fitUsage)
		return 2
	}
	base := "d180"
	if b, ok := vals["base"]; ok {
		base = b
	}
	pr, ok := device.Builtin(base)
	if !ok {
		fmt.Fprintf(stderr, "stagewright fit: -base %q is not a built-in process (%s)\n", base, strings.Join(device.BuiltinNames(), ", "))
		return 2
	}
	if (vals["process"] == "") != (vals["o"] == "") {
		fmt.Fprintf(stderr, "stagewright fit: -process NAME and -o FILE go together\n")
		return 2
	}
	opt := chardata.Options{Pol: pol}
	for _, f := range []struct {
		name string
		dst  *float64
	}{{"w", &opt.W}, {"l", &opt.L}, {"temp", &opt.TempC}} {
		if s, ok := vals[f.name]; ok {
			v, err := units.Parse(s)
			if err != nil {
				fmt.Fprintf(stderr, "stagewright fit: -%s %q: %v\n", f.name, s, err)
				return 2
			}
			*f.dst = v
			if f.name == "temp" {
				opt.TempGiven = true
			}
		}
	}
	data, err := readLimited(file, chardata.MaxBytes)
	if err != nil {
		return failJSON(stdout, stderr, "fit", "data", "file", err.Error())
	}
	table, err := chardata.Read(data, opt)
	if err != nil {
		return failJSON(stdout, stderr, "fit", "data", "file", file+": "+err.Error())
	}
	_, noBins := vals["nobins"]
	res, err := extract.Fit(table, extract.Options{
		Pol: pol, Base: pr.Params(pol), TNom: pr.TNom, GDSWeight: extract.DefaultGDSWeight, Bins: !noBins,
	}, nil)
	if err != nil {
		return failJSON(stdout, stderr, "fit", "fit", "file", file+": "+err.Error())
	}
	stdout.Write(append(res.AppendJSON(nil), '\n'))
	if name := vals["process"]; name != "" {
		if err := writeProcess(vals["o"], name, base, procfile.Fit{Result: res, Table: table, File: filepath.Base(file)}); err != nil {
			fmt.Fprintf(stderr, "stagewright fit: %v\n", err)
			return 1
		}
	}
	return 0
}

// readLimited reads a file ("-" for standard input is not offered: the
// name goes into the process file) of at most limit bytes.
func readLimited(name string, limit int) ([]byte, error) {
	f, err := os.Open(name)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	data, err := io.ReadAll(io.LimitReader(f, int64(limit)+1))
	if err != nil {
		return nil, err
	}
	if len(data) > limit {
		return nil, fmt.Errorf("%s is over %d MB, the most a data file may be", name, limit>>20)
	}
	return data, nil
}

// writeProcess writes the process file, keeping the other polarity of a
// process of the same name and base already in the file.
func writeProcess(path, name, base string, fit procfile.Fit) error {
	f, err := procfile.FromFits(name, "", base, fit)
	if err != nil {
		return err
	}
	if old, err := os.ReadFile(path); err == nil {
		prev, err := procfile.Read(old)
		if err != nil {
			return fmt.Errorf("%s exists and is not a process file this build can add to (%v); give another -o", path, err)
		}
		if prev.Name != name || prev.Base != base {
			return fmt.Errorf("%s holds process %q on %s, not %q on %s; give another -o", path, prev.Name, prev.Base, name, base)
		}
		f.Title = prev.Title
		if fit.Result.Pol == device.NMOS {
			f.P = prev.P
		} else {
			f.N = prev.N
		}
	} else if !errors.Is(err, os.ErrNotExist) {
		return err
	}
	return os.WriteFile(path, f.AppendJSON(nil), 0o644)
}

// processFlag takes "-process FILE" out of the arguments of a design
// command and returns the process file it names (nil when none).
func processFlag(args []string) ([]string, *procfile.File, error) {
	for i, a := range args {
		name, value, has := strings.Cut(strings.TrimLeft(a, "-"), "=")
		if !strings.HasPrefix(a, "-") || name != "process" {
			continue
		}
		rest := append([]string(nil), args[:i]...)
		if !has {
			if i+1 >= len(args) {
				return nil, nil, errors.New("-process needs a process file")
			}
			value = args[i+1]
			rest = append(rest, args[i+2:]...)
		} else {
			rest = append(rest, args[i+1:]...)
		}
		data, err := readLimited(value, procfile.MaxBytes)
		if err != nil {
			return nil, nil, err
		}
		pf, err := procfile.Read(data)
		if err != nil {
			return nil, nil, fmt.Errorf("%s: %w", value, err)
		}
		return rest, &pf, nil
	}
	return args, nil, nil
}

// userProcess is the process file given with -process, applied to every
// fragment the command reads; nil when none.
var userProcess *procfile.File

// onProcess returns the fragment on the user's process, if one was given.
func onProcess(fragment string) string {
	if userProcess == nil {
		return fragment
	}
	return procfile.Apply(fragment, *userProcess)
}
