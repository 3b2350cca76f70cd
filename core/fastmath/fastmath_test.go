package fastmath

import (
	"math"
	"math/big"
	"math/rand"
	"runtime"
	"testing"
)

// The reference is Go's math package. Where math runs the same portable
// code (js/wasm for all three; every architecture but s390x for Atan2) the
// results must be equal to the bit. Where it runs assembly (Log on amd64 and
// s390x, Exp on amd64, arm64, loong64 and s390x) the two may differ by up to
// two units in the last place: the portable code keeps its error below one
// unit (msun's documented bound, checked for Exp against a 160-bit
// reference in TestExpAgainstBigFloat), and the amd64 assembly exp has its
// own error of up to about one unit.
var (
	portableLogExp = runtime.GOARCH == "wasm"
	portableAtan2  = runtime.GOARCH != "s390x"
)

// ulps is the distance between a and b in units in the last place
// (0 for equal values, including two NaNs or equal infinities).
func ulps(a, b float64) float64 {
	if a == b || (math.IsNaN(a) && math.IsNaN(b)) {
		return 0
	}
	if math.IsNaN(a) || math.IsNaN(b) || math.IsInf(a, 0) || math.IsInf(b, 0) || math.Signbit(a) != math.Signbit(b) {
		return math.Inf(1)
	}
	ia, ib := int64(math.Float64bits(math.Abs(a))), int64(math.Float64bits(math.Abs(b)))
	return math.Abs(float64(ia - ib))
}

func check(t *testing.T, name string, exact bool, x []float64, fast, ref func(float64) float64) {
	checkWithin(t, name, exact, 2, x, fast, ref)
}

func checkWithin(t *testing.T, name string, exact bool, most float64, x []float64, fast, ref func(float64) float64) {
	t.Helper()
	worst, at := 0.0, 0.0
	for _, v := range x {
		got, want := fast(v), ref(v)
		if exact && math.Float64bits(got) != math.Float64bits(want) && !(math.IsNaN(got) && math.IsNaN(want)) {
			t.Fatalf("%s(%v) = %v (%#x), math gives %v (%#x): want the same bits", name, v, got, math.Float64bits(got), want, math.Float64bits(want))
		}
		if d := ulps(got, want); d > worst {
			worst, at = d, v
		}
	}
	if worst > most {
		t.Fatalf("%s(%v) differs from the reference by %v ulp, want at most %v", name, at, worst, most)
	}
	t.Logf("%s: %d arguments, largest difference from the reference %v ulp", name, len(x), worst)
}

// specials are the inputs every function must pass through to math.
var specials = []float64{0, math.Copysign(0, -1), math.Inf(1), math.Inf(-1), math.NaN(),
	math.SmallestNonzeroFloat64, 2.2250738585072014e-308, math.MaxFloat64, -1, 1, -math.MaxFloat64,
	1e-300, 5e-324, 4.9e-310, math.Sqrt2 / 2, math.Nextafter(math.Sqrt2/2, 0), math.Nextafter(math.Sqrt2/2, 1)}

func TestLog(t *testing.T) {
	rng := rand.New(rand.NewSource(1))
	x := append([]float64(nil), specials...)
	for i := 0; i < 200000; i++ {
		// Log-uniform over the whole positive range, which covers the sweep's
		// squared gains and noise powers (1e-60 … 1e20) and the model's
		// charges (1e-305 … 1e7); then values near 1, where log is near 0.
		x = append(x, math.Pow(2, -1074+rng.Float64()*2098))
		x = append(x, 1+(rng.Float64()-0.5)*math.Pow(2, -40*rng.Float64()))
	}
	check(t, "Log", portableLogExp, x, Log, math.Log)
}

func TestExp(t *testing.T) {
	rng := rand.New(rand.NewSource(2))
	x := append([]float64(nil), specials...)
	x = append(x, -708, 708, -709.8, 709.8, -745.2, 710, 1.0/(1<<28), -1.0/(1<<28), math.Nextafter(708, 0), math.Nextafter(-708, 0))
	for i := 0; i < 200000; i++ {
		// The whole finite range of the result, which includes softplus
		// (−37 … 0) and the charge solve (−700 … −2); then small arguments.
		x = append(x, -750+rng.Float64()*1460)
		x = append(x, (rng.Float64()-0.5)*math.Pow(2, -30*rng.Float64()))
	}
	check(t, "Exp", portableLogExp, x, Exp, math.Exp)
}

// bigExp is e^x correctly rounded to float64 (for results in the normal
// range), from 160-bit arithmetic: x = k·ln 2 + r, e^r by its Taylor
// series (|r| ≤ 0.35, 60 terms leave an error far below 2^−160).
func bigExp(x float64) float64 {
	const prec = 160
	nf := func(v float64) *big.Float { return new(big.Float).SetPrec(prec).SetFloat64(v) }
	// ln 2 = Σ 1/(k·2^k).
	ln2 := nf(0)
	for k := 1; k <= 200; k++ {
		term := nf(1)
		term.SetMantExp(term, -k)
		term.Quo(term, nf(float64(k)))
		ln2.Add(ln2, term)
	}
	k := math.Round(x / math.Ln2)
	r := nf(x)
	r.Sub(r, new(big.Float).SetPrec(prec).Mul(nf(k), ln2))
	sum, term := nf(1), nf(1)
	for i := 1; i <= 60; i++ {
		term.Mul(term, r)
		term.Quo(term, nf(float64(i)))
		sum.Add(sum, term)
	}
	sum.SetMantExp(sum, int(k))
	v, _ := sum.Float64()
	return v
}

// Exp is faithfully rounded: within one unit in the last place of the
// exact value (msun's bound for this algorithm), over the range the model
// uses. The sample is smaller than above because the reference is slow.
func TestExpAgainstBigFloat(t *testing.T) {
	rng := rand.New(rand.NewSource(4))
	var x []float64
	for i := 0; i < 3000; i++ {
		x = append(x, -708+rng.Float64()*1416, (rng.Float64()-0.5)*math.Pow(2, -28*rng.Float64()))
	}
	checkWithin(t, "Exp against 160-bit", false, 1, x, Exp, bigExp)
}

func TestAtan2(t *testing.T) {
	rng := rand.New(rand.NewSource(3))
	var ys, xs []float64
	for _, a := range specials {
		for _, b := range specials {
			ys, xs = append(ys, a), append(xs, b)
		}
	}
	for i := 0; i < 200000; i++ {
		// Every quadrant, both components over ±1e±150 (a transfer
		// function's real and imaginary parts), and the reduction
		// boundaries |y/x| = 0.66 and tan(3π/8).
		m := func() float64 {
			v := math.Pow(10, -150+300*rng.Float64())
			if rng.Intn(2) == 0 {
				v = -v
			}
			return v
		}
		y, x := m(), m()
		ys, xs = append(ys, y), append(xs, x)
		r := []float64{0.66, 2.41421356237309504880, 1}[rng.Intn(3)] * (1 + (rng.Float64()-0.5)*1e-12)
		ys, xs = append(ys, x*r), append(xs, x)
	}
	idx := make([]float64, len(xs))
	for i := range idx {
		idx[i] = float64(i)
	}
	check(t, "Atan2", portableAtan2, idx,
		func(i float64) float64 { return Atan2(ys[int(i)], xs[int(i)]) },
		func(i float64) float64 { return math.Atan2(ys[int(i)], xs[int(i)]) })
}

var sink float64

func benchArgs() []float64 {
	x := make([]float64, 401)
	for i := range x {
		x[i] = math.Pow(10, -10+float64(i)/20)
	}
	return x
}

func BenchmarkLog(b *testing.B) {
	x := benchArgs()
	for _, c := range []struct {
		name string
		f    func(float64) float64
	}{{"fastmath", Log}, {"math", math.Log}} {
		b.Run(c.name, func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				for _, v := range x {
					sink += c.f(v)
				}
			}
		})
	}
}

func BenchmarkExp(b *testing.B) {
	x := benchArgs()
	for _, c := range []struct {
		name string
		f    func(float64) float64
	}{{"fastmath", Exp}, {"math", math.Exp}} {
		b.Run(c.name, func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				for _, v := range x {
					sink += c.f(-v)
				}
			}
		})
	}
}

func BenchmarkAtan2(b *testing.B) {
	x := benchArgs()
	for _, c := range []struct {
		name string
		f    func(float64, float64) float64
	}{{"fastmath", Atan2}, {"math", math.Atan2}} {
		b.Run(c.name, func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				for _, v := range x {
					sink += c.f(v, 1-v)
				}
			}
		})
	}
}
