package design

import (
	"math/rand/v2"
	"net/url"
	"testing"
)

// pathUnescape must agree with net/url's PathUnescape (the outside
// reference) on results and on which inputs fail, with the same bad escape.
func TestPathUnescapeMatchesNetURL(t *testing.T) {
	cases := []string{"", "a", "%", "%4", "%4g", "%41", "%4a%4A", "a%2", "a%zz%41", "+%2B+", "%e2%80%a6", "%C2%B5", "%00", "%%41", "x%", "%ff%fF"}
	alphabet := "%%%0123456789abcdefABCDEFgzZ+&=µ"
	rng := rand.New(rand.NewPCG(7, 8))
	for i := 0; i < 20000; i++ {
		b := make([]byte, rng.IntN(10))
		for j := range b {
			b[j] = alphabet[rng.IntN(len(alphabet))]
		}
		cases = append(cases, string(b))
	}
	for _, s := range cases {
		got, err := pathUnescape(s)
		want, wantErr := url.PathUnescape(s)
		if (err == nil) != (wantErr == nil) || got != want {
			t.Fatalf("pathUnescape(%q) = %q, %v; net/url gives %q, %v", s, got, err, want, wantErr)
		}
		if err != nil && err.Error() != wantErr.Error() {
			t.Fatalf("pathUnescape(%q): error %q, net/url %q", s, err, wantErr)
		}
	}
}
