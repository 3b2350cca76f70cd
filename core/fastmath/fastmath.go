package fastmath

import "math"

// Log returns the natural logarithm of x, as math.Log.
func Log(x float64) float64 {
	const (
		ln2Hi = 6.93147180369123816490e-01 // 3fe62e42 fee00000
		ln2Lo = 1.90821492927058770002e-10 // 3dea39ef 35793c76
		l1    = 6.666666666666735130e-01   // 3FE55555 55555593
		l2    = 3.999999999940941908e-01   // 3FD99999 9997FA04
		l3    = 2.857142874366239149e-01   // 3FD24924 94229359
		l4    = 2.222219843214978396e-01   // 3FCC71C5 1D8E78AF
		l5    = 1.818357216161805012e-01   // 3FC74664 96CB03DE
		l6    = 1.531383769920937332e-01   // 3FC39A09 D078C69F
		l7    = 1.479819860511658591e-01   // 3FC2F112 DF3E5244
	)
	b := math.Float64bits(x)
	e := int(b>>52) & 0x7ff
	if e == 0 || e == 0x7ff || b>>63 != 0 {
		return math.Log(x) // zero, subnormal, negative, infinite or NaN
	}
	// x = f1·2^ki with f1 in [½, 1), as Frexp gives it.
	ki := e - 1022
	f1 := math.Float64frombits(b&^(0x7ff<<52) | 1022<<52)
	if f1 < math.Sqrt2/2 {
		f1 *= 2
		ki--
	}
	f := f1 - 1
	k := float64(ki)
	s := f / (2 + f)
	s2 := s * s
	s4 := s2 * s2
	t1 := s2 * (l1 + s4*(l3+s4*(l5+s4*l7)))
	t2 := s4 * (l2 + s4*(l4+s4*l6))
	R := t1 + t2
	hfsq := 0.5 * f * f
	return k*ln2Hi - ((hfsq - (s*(hfsq+R) + k*ln2Lo)) - f)
}

// Exp returns e**x, as math.Exp.
func Exp(x float64) float64 {
	const (
		ln2Hi    = 6.93147180369123816490e-01
		ln2Lo    = 1.90821492927058770002e-10
		log2e    = 1.44269504088896338700e+00
		p1       = 1.66666666666666657415e-01  // 0x3FC55555; 0x55555555
		p2       = -2.77777777770155933842e-03 // 0xBF66C16C; 0x16BEBD93
		p3       = 6.61375632143793436117e-05  // 0x3F11566A; 0xAF25DE2C
		p4       = -1.65339022054652515390e-06 // 0xBEBBBD41; 0xC5D26BF1
		p5       = 4.13813679705723846039e-08  // 0x3E663769; 0x72BEA4D0
		nearZero = 1.0 / (1 << 28)
		// Beyond ±708 the result may leave the normal range (e^−708 ≈
		// 3.3e-308 is just above the smallest normal, 2.2e-308).
		limit = 708
	)
	if !(x > -limit && x < limit) || (-nearZero < x && x < nearZero) {
		return math.Exp(x) // far out, tiny, or NaN
	}
	// x = k·ln2 + r with |r| ≤ ln2/2, r = hi − lo.
	var k int
	if x < 0 {
		k = int(log2e*x - 0.5)
	} else {
		k = int(log2e*x + 0.5)
	}
	hi := x - float64(k)*ln2Hi
	lo := float64(k) * ln2Lo
	r := hi - lo
	t := r * r
	c := r - t*(p1+t*(p2+t*(p3+t*(p4+t*p5))))
	y := 1 - ((lo - (r*c)/(2-c)) - hi)
	// y·2^k: y lies in [0.7, 1.5] and the result stays normal, so scaling
	// is adding k to the exponent field, which is what Ldexp does here.
	return math.Float64frombits(math.Float64bits(y) + uint64(k)<<52)
}

// Atan2 returns the arc tangent of y/x in radians, using the signs of both
// to find the quadrant, as math.Atan2.
func Atan2(y, x float64) float64 {
	const (
		p0       = -8.750608600031904122785e-01
		p1       = -1.615753718733365076637e+01
		p2       = -7.500855792314704667340e+01
		p3       = -1.228866684490136173410e+02
		p4       = -6.485021904942025371773e+01
		q0       = +2.485846490142306297962e+01
		q1       = +1.650270098316988542046e+02
		q2       = +4.328810604912902668951e+02
		q3       = +4.853903996359136964868e+02
		q4       = +1.945506571482613964425e+02
		moreBits = 6.123233995736765886130e-17 // π/2 = math.Pi/2 + moreBits
		tan3pi8  = 2.41421356237309504880      // tan(3π/8)
	)
	a := y / x
	if !(a > 0 || a < 0) || math.IsInf(a, 0) || math.IsInf(x, 0) {
		return math.Atan2(y, x) // a zero, infinite or NaN argument or quotient
	}
	neg := a < 0
	if neg {
		a = -a
	}
	// Reduce a to [0, 0.66]: atan a = base + atan(arg) + extra.
	arg, base, extra := a, 0.0, 0.0
	switch {
	case a > tan3pi8:
		arg, base, extra = -1/a, math.Pi/2, moreBits
	case a > 0.66:
		arg, base, extra = (a-1)/(a+1), math.Pi/4, 0.5*moreBits
	}
	z := arg * arg
	z = z * ((((p0*z+p1)*z+p2)*z+p3)*z + p4) / (((((z+q0)*z+q1)*z+q2)*z+q3)*z + q4)
	q := base + (arg*z + arg) + extra
	if neg {
		q = -q
	}
	if x < 0 {
		if q <= 0 {
			return q + math.Pi
		}
		return q - math.Pi
	}
	return q
}
