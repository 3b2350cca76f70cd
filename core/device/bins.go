package device

import (
	"fmt"
	"sort"
)

// Bin is one polarity's parameter set fitted at one channel length. A
// process whose single set cannot follow a device over its whole length
// range carries several bins, and a device of length L gets parameters
// interpolated between the two bins around it (see Process.ParamsAt).
type Bin struct {
	L      float64 // m, the channel length the set was fitted at
	Params Params
}

// ParamsAt returns the parameters of polarity p for a device of channel
// length l. Without bins it is Params(p). With bins, every field is
// interpolated linearly in 1/L between the two neighbouring bins, and held
// at the first or last bin outside their span. 1/L is the variable in
// which the short-channel terms (λ = lenmod/L, σ = dibl/L) are linear, so
// a quantity that scales as 1/L is reproduced exactly between bins.
func (pr Process) ParamsAt(p Polarity, l float64) Params {
	bins := pr.Bins(p)
	if len(bins) == 0 {
		return pr.Params(p)
	}
	if len(bins) == 1 || !(l > bins[0].L) {
		return bins[0].Params
	}
	last := len(bins) - 1
	if l >= bins[last].L {
		return bins[last].Params
	}
	i := sort.Search(len(bins), func(i int) bool { return bins[i].L >= l })
	a, b := &bins[i-1], &bins[i]
	if l == b.L {
		return b.Params
	}
	t := (1/a.L - 1/l) / (1/a.L - 1/b.L) // 0 at a, 1 at b
	out := a.Params
	for _, info := range ParamTable {
		fa, fb := *info.Field(&a.Params), *info.Field(&b.Params)
		if fa != fb {
			*info.Field(&out) = fa + t*(fb-fa)
		}
	}
	return out
}

// Bins returns the length bins of polarity p, sorted by L; nil when the
// polarity has one parameter set for all lengths.
func (pr Process) Bins(p Polarity) []Bin {
	switch p {
	case NMOS:
		return pr.NBins
	case PMOS:
		return pr.PBins
	}
	return nil
}

// validateBins checks that bins are sorted by strictly rising length inside
// the process's length limits and that each set is valid.
func validateBins(bins []Bin, lmin, lmax float64) error {
	for i, b := range bins {
		if !(b.L >= lmin && b.L <= lmax) {
			return fmt.Errorf("bin %d: L = %g m is outside the process's lengths [%g, %g] m", i+1, b.L, lmin, lmax)
		}
		if i > 0 && !(b.L > bins[i-1].L) {
			return fmt.Errorf("bin %d: L = %g m does not follow the bin before it (%g m): bins must rise in length", i+1, b.L, bins[i-1].L)
		}
		if err := b.Params.Validate(); err != nil {
			return fmt.Errorf("bin %d (L = %g m): %w", i+1, b.L, err)
		}
	}
	return nil
}
