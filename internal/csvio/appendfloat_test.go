package csvio

import (
	"math"
	"math/bits"
	"math/rand/v2"
	"strconv"
	"testing"
)

// appendFloatRef is the formatter as it was before its digits were made
// eight at a time (digit pairs from a table, right to left): the reference
// the differential test below holds AppendFloat to, byte for byte.
func appendFloatRef(b []byte, v float64, prec int) []byte {
	if uint(prec) > 9 {
		if math.IsNaN(v) {
			return b
		}
		return strconv.AppendFloat(b, v, 'f', prec, 64)
	}
	x := v * pow10[prec] // the same magnitude as |v| 10^prec: IEEE products are sign-symmetric
	neg := x < 0
	if neg {
		x = -x
	}
	if !(x < 1<<53) {
		if math.IsNaN(v) {
			return b
		}
		return strconv.AppendFloat(b, v, 'f', prec, 64)
	}
	// n = math.Round(x): below 2^53 the fraction x - trunc(x) is exact.
	t := int64(x)
	n := uint64(t)
	if x-float64(t) >= 0.5 {
		n++
	}
	neg = neg && n != 0
	// ip is the integer part; the fraction digits are n - ip 10^prec.
	var ip uint64
	switch prec {
	case 2:
		ip = n / 100
	case 3:
		ip = n / 1000
	default:
		ip = n / pow10u[prec]
	}
	// Length: sign, integer digits, point and prec fraction digits. The
	// digits are written straight into b from the right, two at a time.
	l := decimalLen(ip) + prec
	if prec > 0 {
		l++
	}
	if neg {
		l++
	}
	at := len(b)
	if cap(b)-at < l {
		b = append(b, make([]byte, l)...)[:at]
	}
	b = b[:at+l]
	d := b[at:]
	if neg {
		d[0] = '-'
	}
	i := l
	switch f := n - ip*pow10u[prec]; prec {
	case 0:
	case 2:
		f *= 2
		d[i-3], d[i-2], d[i-1] = '.', digits2Ref[f], digits2Ref[f+1]
		i -= 3
	case 3:
		q := f / 100
		r := (f - q*100) * 2
		d[i-4], d[i-3], d[i-2], d[i-1] = '.', byte('0'+q), digits2Ref[r], digits2Ref[r+1]
		i -= 4
	default:
		for k := prec; k > 0; k-- {
			q := f / 10
			i--
			d[i] = byte('0' + f - q*10)
			f = q
		}
		i--
		d[i] = '.'
	}
	for ip >= 100 {
		q := ip / 100
		r := (ip - q*100) * 2
		i -= 2
		d[i], d[i+1] = digits2Ref[r], digits2Ref[r+1]
		ip = q
	}
	if ip >= 10 {
		d[i-2], d[i-1] = digits2Ref[2*ip], digits2Ref[2*ip+1]
	} else {
		d[i-1] = byte('0' + ip)
	}
	return b
}

const digits2Ref = "00010203040506070809101112131415161718192021222324252627282930313233343536373839" +
	"40414243444546474849505152535455565758596061626364656667686970717273747576777879" +
	"8081828384858687888990919293949596979899"

// AppendFloat writes exactly what the former formatter wrote, byte for
// byte, for random values of every kind and magnitude and for the edge
// cases: exact ties after scaling, values that round to zero or up to the
// next power of ten (359.995 to 360.00), negatives, zero and -0, NaN, the
// infinities, the limit 2^53 of the fast path, the 8-digit boundary of the
// one-word path, and decimals outside 0..9.
func TestAppendFloatMatchesReference(t *testing.T) {
	check := func(v float64, prec int) {
		t.Helper()
		// b without spare capacity, with a little, just under and just at
		// the 32 bytes the fast path writes into, and plenty.
		for _, room := range []int{0, 5, 31, 32, 64} {
			b := append(make([]byte, 0, 3+room), "ab,"...)
			want := string(appendFloatRef(append([]byte(nil), b...), v, prec))
			if got := string(AppendFloat(b, v, prec)); got != want {
				t.Fatalf("AppendFloat(%q with room %d, %v (%#x), %d) = %q, before %q", b, room, v, math.Float64bits(v), prec, got, want)
			}
		}
		// Writer.Float writes the number as the first field, and after a
		// comma as a later one.
		w := NewMemWriter()
		w.Float(v, prec)
		w.Float(v, prec)
		one := string(appendFloatRef(nil, v, prec))
		if got := string(w.Buffered()); got != one+","+one {
			t.Fatalf("Writer.Float twice %v (%#x), %d: %q, before %q", v, math.Float64bits(v), prec, got, one+","+one)
		}
	}
	edges := []float64{0, math.Copysign(0, -1), math.NaN(), math.Inf(1), math.Inf(-1), math.SmallestNonzeroFloat64, -math.SmallestNonzeroFloat64,
		0.5, -0.5, 0.05, 0.005, -0.005, 0.0049999999, -0.0049999999, 0.125, -0.125, 0.0625, 1.5, 2.5, -2.5, 359.995, 359.99499999999995, 359.999, 360,
		-359.995, 89.995, 90, 179.995, 9.995, 99.995, 999.995, 999.99499999, -999.994, 1000, 999.5, 0.0005, 0.00049999, 9.9995, 99999999.5, 1e8 - 0.5, 1e8, 1e8 + 0.5, 9999999.995, 9999999.9995,
		6123456.789, 6500000.0005, 1 << 53, 1<<53 - 1, 1 << 52, -(1 << 52), 1e15, 9.007199254740991e15, 1e16, 1e20, -1e20, math.MaxFloat64, -math.MaxFloat64}
	for prec := -1; prec <= 11; prec++ {
		for _, v := range edges {
			check(v, prec)
			// scaled limits: just below and above 2^53 and 1e8 after scaling
			if prec >= 0 && prec <= 9 {
				for _, s := range []float64{1 << 53, 1e8, 1e16, 1e7} {
					u := s / math.Pow10(prec)
					check(u, prec)
					check(math.Nextafter(u, 0), prec)
					check(math.Nextafter(u, math.Inf(1)), prec)
					check(-u, prec)
				}
			}
		}
	}
	r := rand.New(rand.NewPCG(17, 19))
	for i := 0; i < 400000; i++ {
		prec := r.IntN(10)
		v := sampleFloat(r, i%6, prec)
		if i%6 == 3 { // exact ties: an integer plus one half, scaled down
			v = (float64(r.IntN(1<<30)) + 0.5) / math.Pow10(prec)
			if r.IntN(2) == 0 {
				v = -v
			}
		}
		if i%6 == 4 { // any bits at all
			v = math.Float64frombits(r.Uint64())
		}
		check(v, prec)
	}
}

// digits8 gives the 8 digits strconv gives, at every power of ten and its
// neighbours and for random numbers below 1e8.
func TestDigits8(t *testing.T) {
	check := func(n uint64) {
		t.Helper()
		w := digits8(n)
		s := strconv.FormatUint(n+1e8, 10)[1:] // 8 digits with leading zeros
		for k := 0; k < 8; k++ {
			if got := byte(w>>(8*k)) + '0'; got != s[k] {
				t.Fatalf("digits8(%d) = %#x, digit %d is %c, want %c", n, w, k, got, s[k])
			}
		}
		if lz := bits.TrailingZeros64(w) >> 3; n != 0 && lz != 8-len(strconv.FormatUint(n, 10)) {
			t.Fatalf("digits8(%d): %d leading zero bytes", n, lz)
		}
	}
	for p := uint64(1); p <= 1e8; p *= 10 {
		check(p - 1)
		if p < 1e8 {
			check(p)
			check(p + 1)
		}
	}
	r := rand.New(rand.NewPCG(5, 5))
	for i := 0; i < 1000000; i++ {
		check(r.Uint64N(1e8))
	}
}

// sampleFloat returns a random value of a kind the converter formats:
// kind 0 an angle, 1 a signed angle, 2 a coordinate, any other any
// magnitude and sign.
func sampleFloat(r *rand.Rand, kind, prec int) float64 {
	switch kind {
	case 0:
		return r.Float64() * 360
	case 1:
		return (r.Float64() - 0.5) * 180
	case 2:
		return r.Float64() * 1e7
	}
	return (r.Float64() - 0.5) * math.Pow(10, float64(r.IntN(16)-4))
}
