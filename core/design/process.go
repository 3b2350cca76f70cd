package design

import (
	"fmt"
	"slices"

	"stagewright/core/device"
)

// ProcessOf returns the design's process with its overrides applied and
// then moved to the design's corner (Aids.Corner; "" means tt): the
// overrides describe the typical device, the corner skews it. The built-in
// process is the version the design's fragment version names (see
// device.BuiltinVersion), so a link keeps its figures.
//
// Overrides for every length replace a polarity's parameters. Overrides
// with a length (L > 0) make bins: one parameter set per length named,
// each the polarity's set with every override of that length applied.
func (d Design) ProcessOf() (device.Process, error) {
	version := d.Version
	if version == 0 {
		version = device.LatestVersion
	}
	pr, ok := device.BuiltinVersion(d.Process, version)
	if !ok {
		return pr, fmt.Errorf("unknown process %q (fragment version %d)", d.Process, d.Version)
	}
	for _, o := range d.Overrides {
		if o.L != 0 {
			continue
		}
		f, ref, ok := lookupOverride(o.Key)
		if !ok {
			return pr, fmt.Errorf("unknown process parameter %q", o.Key)
		}
		if f.spread != nil {
			sp := &pr.NSpread
			if ref.pol == 'p' {
				sp = &pr.PSpread
			}
			*f.spread(sp) = o.Value
			continue
		}
		*f.field(polParams(&pr, ref.pol)) = o.Value
	}
	var err error
	if pr.NBins, err = bins(d.Overrides, 'n', pr.N); err == nil {
		pr.PBins, err = bins(d.Overrides, 'p', pr.P)
	}
	if err != nil {
		return pr, err
	}
	if c := d.Aids.Corner; c != "" && c != "tt" {
		if pr, err = device.Corner(pr, c); err != nil {
			return pr, fmt.Errorf("corner: %w", err)
		}
	}
	if err := pr.N.Validate(); err != nil {
		return pr, fmt.Errorf("NMOS parameters: %w", err)
	}
	if err := pr.P.Validate(); err != nil {
		return pr, fmt.Errorf("PMOS parameters: %w", err)
	}
	if err := pr.Validate(); err != nil {
		return pr, err
	}
	return pr, nil
}

func polParams(pr *device.Process, pol byte) *device.Params {
	if pol == 'p' {
		return &pr.P
	}
	return &pr.N
}

// bins returns the length bins of polarity pol: one set per length that an
// override of pol names, each base with that length's overrides applied;
// nil when pol has none.
func bins(overrides []Override, pol byte, base device.Params) ([]device.Bin, error) {
	n := 0 // at most this many lengths: one allocation for all bins
	for _, o := range overrides {
		if o.L != 0 && o.Key[0] == pol {
			n++
		}
	}
	if n == 0 {
		return nil, nil
	}
	out := make([]device.Bin, 0, n)
	for _, o := range overrides {
		if o.L == 0 || o.Key[0] != pol {
			continue
		}
		f, _, ok := lookupOverride(o.Key)
		if !ok || f.field == nil {
			return nil, fmt.Errorf("%q has no length bins", o.Key)
		}
		i, found := slices.BinarySearchFunc(out, o.L, func(b device.Bin, l float64) int {
			switch {
			case b.L < l:
				return -1
			case b.L > l:
				return 1
			}
			return 0
		})
		if !found {
			out = slices.Insert(out, i, device.Bin{L: o.L, Params: base})
		}
		*f.field(&out[i].Params) = o.Value
	}
	return out, nil
}
