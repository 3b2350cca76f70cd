package design

import "strconv"

// pathUnescape decodes the percent escapes of one fragment key or value
// exactly as net/url's PathUnescape does: %XX (hex, either case) becomes
// the byte XX, '+' stays '+', and a '%' not followed by two hex digits is an
// escapeError holding it and at most two following bytes. Written here
// because net/url (with net/netip and unique, which it pulls in) is about
// 25 kB of the WebAssembly engine and this is all of it the page needs.
func pathUnescape(s string) (string, error) {
	n := 0
	for i := 0; i < len(s); {
		if s[i] != '%' {
			i++
			continue
		}
		if i+2 >= len(s) || !isHex(s[i+1]) || !isHex(s[i+2]) {
			bad := s[i:]
			if len(bad) > 3 {
				bad = bad[:3]
			}
			return "", escapeError(bad)
		}
		n++
		i += 3
	}
	if n == 0 {
		return s, nil
	}
	out := make([]byte, 0, len(s)-2*n)
	for i := 0; i < len(s); i++ {
		if s[i] == '%' {
			out = append(out, unhex(s[i+1])<<4|unhex(s[i+2]))
			i += 2
			continue
		}
		out = append(out, s[i])
	}
	return string(out), nil
}

// escapeError is a malformed percent escape ("%", "%z", "%4g", …).
type escapeError string

func (e escapeError) Error() string { return "invalid URL escape " + strconv.Quote(string(e)) }

func isHex(c byte) bool {
	return '0' <= c && c <= '9' || 'a' <= c && c <= 'f' || 'A' <= c && c <= 'F'
}

func unhex(c byte) byte {
	switch {
	case c <= '9':
		return c - '0'
	case c <= 'F':
		return c - 'A' + 10
	}
	return c - 'a' + 10
}
