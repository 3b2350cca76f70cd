package design

import (
	"cmp"
	"errors"
	"math"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"

	"stagewright/core/device"
	"stagewright/core/units"
)

// Limits on what Decode reads.
const (
	MaxFragmentBytes = 4096 // a longer fragment is not parsed at all
	MaxValueChars    = 64   // a longer value is rejected
)

// givenValue is the text a fragment gave for one plain key.
type givenValue struct {
	text    string
	pos     int  // index of the pair in the fragment
	present bool // the key was in the fragment
	bad     bool // already reported (bad escape, too long): use the default
}

// givenOverride is the text a fragment gave for one override key.
type givenOverride struct {
	key, text string  // key as given
	canon     string  // key by its current name, without the length suffix
	l         float64 // m, the bin's length; 0 = every length
	pos       int
	value     float64
	ok        bool // value was read and is in range
}

// placedProblem is a problem with the position of its pair, so that Decode
// can report problems in fragment order.
type placedProblem struct {
	pos int
	Problem
}

// Decode parses a fragment, the part of a link after '#', with or without
// the '#'. It always returns a usable design: keys that are good are
// applied, missing or bad ones take their defaults (see Default), and the
// result passes Validate. When anything is wrong it also returns a
// *FragmentError that lists every problem, in fragment order, each naming
// the key, the value as typed, what is wrong and what is accepted.
//
// The fragment is pairs key=value joined by '&'; empty pairs ("a=1&&b=2",
// a trailing '&') are skipped. Each key and value is percent-decoded on its
// own as a URL path segment ("%C2%B5" is µ, '+' stays a plus sign). Numbers
// are read by units.Parse ("4.7k", "10u", "1e-3"); a few keys take words.
// The order of the pairs does not matter. A key given twice is a problem and
// the first value is kept. A fragment longer than MaxFragmentBytes is not
// read: Decode returns the d180 defaults and a single problem. Overrides
// come sorted by key, and nil when the fragment has none.
func Decode(fragment string) (Design, error) {
	if len(fragment) > MaxFragmentBytes {
		return Default(""), &FragmentError{Problems: []Problem{{
			Message: "the fragment is " + strconv.Itoa(len(fragment)) + " bytes long; this build reads at most " +
				strconv.Itoa(MaxFragmentBytes) + ", so the defaults are used",
		}}}
	}
	fragment = strings.TrimPrefix(fragment, "#")

	var given [numKeys]givenValue
	var problems []placedProblem
	var overrides []givenOverride
	report := func(pos int, key, value, message string) {
		problems = append(problems, placedProblem{pos: pos, Problem: Problem{Key: key, Value: value, Message: message}})
	}

	for pos := 0; fragment != ""; pos++ {
		var pair string
		pair, fragment, _ = strings.Cut(fragment, "&")
		if pair == "" {
			continue
		}
		rawKey, rawValue, hasEquals := strings.Cut(pair, "=")
		key, err := pathUnescape(rawKey)
		if err != nil {
			report(pos, rawKey, rawValue, "the key has a bad percent escape ("+escapeReason(err)+")")
			continue
		}
		if !hasEquals {
			report(pos, key, "", "missing '=' (write key=value)")
			continue
		}
		if key == "" {
			report(pos, "", rawValue, "empty key (write key=value)")
			continue
		}
		// What is wrong with the value is reported only for a known key
		// given for the first time: a repeat or an unknown key says so alone.
		// A pinned design (pin) holds a whole fragment, so its value may be
		// as long as a fragment.
		maxChars := MaxValueChars
		if i, ok := keyIndex[key]; ok && keyTable[i].long {
			maxChars = MaxFragmentBytes
		}
		value, valueProblem := rawValue, ""
		if v, err := pathUnescape(rawValue); err != nil {
			valueProblem = "the value has a bad percent escape (" + escapeReason(err) + ")"
		} else if value = v; utf8.RuneCountInString(value) > maxChars {
			valueProblem = "the value is " + strconv.Itoa(utf8.RuneCountInString(value)) +
				" characters long; at most " + strconv.Itoa(maxChars) + " are read"
		}
		bad := valueProblem != ""

		if i, ok := keyIndex[key]; ok {
			if given[i].present {
				report(pos, key, value, "repeated key: the first value ("+given[i].text+") is kept")
				continue
			}
			if bad {
				report(pos, key, value, valueProblem)
			} else if key == "sw" {
				value = CanonicalKey(value) // a sweep of "n.vt0" in an older link moves n.thresh
			}
			given[i] = givenValue{text: value, pos: pos, present: true, bad: bad}
			continue
		}
		base, lText, binned := strings.Cut(key, "@")
		if f, ref, ok := lookupOverride(base); ok {
			o := givenOverride{key: key, canon: ref.key(), text: value, pos: pos}
			if binned && f.spread != nil {
				report(pos, key, value, base+" is a figure of the whole process's spread: it takes no length (write "+base+"=…)")
				continue
			}
			if binned {
				l, err := units.Parse(lText)
				if err != nil || !(l > 0) || math.IsInf(l, 0) {
					report(pos, key, value, "the length after @ must be a channel length in m, such as "+base+"@180n")
					continue
				}
				o.l = l
			}
			if j := slices.IndexFunc(overrides, func(g givenOverride) bool { return g.canon == o.canon && g.l == o.l }); j >= 0 {
				report(pos, key, value, "repeated key: the first value ("+overrides[j].key+"="+overrides[j].text+") is kept")
				continue
			}
			if bad {
				report(pos, key, value, valueProblem)
			} else {
				var msg string
				if o.value, msg = parseNumber(value, f.span(), false, false, f.label, f.unit, f.zeroMeans); msg != "" {
					report(pos, key, value, msg)
				} else {
					o.ok = true
				}
			}
			overrides = append(overrides, o)
			continue
		}
		report(pos, key, value, unknownKeyMessage(key, "unknown key"))
	}

	d, resolveProblems := resolve(&given)
	problems = append(problems, resolveProblems...)

	pr := lookupProcess(d.Process)
	for _, o := range overrides {
		if o.ok && o.l != 0 && !(o.l >= pr.LMin && o.l <= pr.LMax) {
			report(o.pos, o.key, o.text, binLengthMessage(pr, o.l))
			o.ok = false
		}
		if o.ok {
			d.Overrides = append(d.Overrides, Override{Key: o.canon, L: o.l, Value: o.value})
		}
	}
	slices.SortFunc(d.Overrides, compareOverrides)
	for _, pol := range [...]byte{'n', 'p'} {
		if key, msg := dopingProblem(pr, d.Overrides, pol); key != "" {
			j := slices.IndexFunc(d.Overrides, func(o Override) bool { return o.Key == key && o.L == 0 })
			g := overrides[slices.IndexFunc(overrides, func(o givenOverride) bool { return o.canon == key && o.l == 0 })]
			report(g.pos, g.key, g.text, msg)
			d.Overrides = slices.Delete(d.Overrides, j, j+1)
		}
	}
	if len(d.Overrides) == 0 {
		d.Overrides = nil
	}

	if err := d.Validate(); err != nil {
		// resolve only ever applies values it has checked and defaults that
		// lie inside their spans, so this is a bug; still hand back a usable
		// design and say so.
		d = Default(d.Process)
		problems = append(problems, placedProblem{pos: math.MaxInt, Problem: Problem{
			Message: "internal: the decoded design failed its own checks (" + err.Error() + "); the defaults are used",
		}})
	}
	if len(problems) == 0 {
		return d, nil
	}
	slices.SortStableFunc(problems, func(a, b placedProblem) int { return a.pos - b.pos })
	fe := &FragmentError{Problems: make([]Problem, len(problems))}
	for i, p := range problems {
		fe.Problems[i] = p.Problem
	}
	return d, fe
}

// resolve builds a design from the given texts, key by key in table order,
// and returns the problems with the given values it could not apply.
func resolve(given *[numKeys]givenValue) (Design, []placedProblem) {
	var d Design
	var problems []placedProblem
	pr := lookupProcess(defaultProcess)
	for i := range keyTable {
		k := &keyTable[i]
		g := &given[i]
		if k.isText() {
			ok := false
			if g.present && !g.bad {
				if msg := k.readText(&d, g.text); msg != "" {
					problems = append(problems, placedProblem{g.pos, Problem{k.name, g.text, msg}})
				} else {
					ok = true
				}
			}
			if !ok {
				k.readText(&d, k.defText)
			}
		} else if k.isWord() {
			w, ok := "", false
			if g.present && !g.bad {
				if w, ok = matchWord(k.words(&d), g.text); !ok {
					problems = append(problems, placedProblem{g.pos, Problem{k.name, g.text, k.wordMessage(&d)}})
				}
			}
			if !ok {
				w = k.defWord
			}
			k.setWord(&d, w)
		} else {
			v, ok := 0.0, false
			if g.present && !g.bad {
				var msg string
				if v, msg = k.parse(pr, &d, g.text); msg != "" {
					problems = append(problems, placedProblem{g.pos, Problem{k.name, g.text, msg}})
				} else {
					ok = true
				}
			}
			if !ok {
				v = k.def(pr, &d)
			}
			k.set(&d, v)
		}
		if k.setsProcess {
			pr = lookupProcess(d.Process)
		}
	}
	return d, problems
}

// matchWord returns the word of words equal to text. It returns the table's
// own string, so that the design does not keep the fragment alive.
func matchWord(words []string, text string) (string, bool) {
	for _, w := range words {
		if w == text {
			return w, true
		}
	}
	return "", false
}

func (k *keyDef) wordMessage(d *Design) string {
	if k.wrongWord != nil {
		if msg := k.wrongWord(d); msg != "" {
			return msg
		}
	}
	return k.label + " must be one of " + strings.Join(k.words(d), ", ")
}

// parse reads the text of a number key and checks it in the context of d.
// It returns the value, or a message saying what is wrong and what is
// accepted.
func (k *keyDef) parse(pr *device.Process, d *Design, text string) (float64, string) {
	if k.infOK && text == "inf" {
		return math.Inf(1), ""
	}
	v, msg := parseNumber(text, k.span(pr, d), k.integer, k.infOK, k.label, k.unit, k.zeroMeans)
	if msg == "" && k.extra != nil {
		msg = k.extra(d, v)
	}
	return v, msg
}

// check returns "" when v is acceptable for the key in the context of d, or
// what is wrong.
func (k *keyDef) check(pr *device.Process, d *Design, v float64) string {
	sp := k.span(pr, d)
	if !numberOK(v, sp, k.integer, k.infOK) {
		return rangeMessage(sp, k.integer, k.infOK, k.label, k.unit, k.zeroMeans)
	}
	if k.extra != nil {
		return k.extra(d, v)
	}
	return ""
}

func numberOK(v float64, sp span, integer, infOK bool) bool {
	if infOK && math.IsInf(v, 1) {
		return true
	}
	if math.IsInf(v, 0) || !sp.contains(v) {
		return false
	}
	return !integer || v == math.Trunc(v)
}

// parseNumber reads text with units.Parse and checks it against sp.
func parseNumber(text string, sp span, integer, infOK bool, label, unit, zeroMeans string) (float64, string) {
	v, err := units.Parse(text)
	if err != nil {
		reason := err.Error()
		var ne *units.NumError
		if errors.As(err, &ne) {
			reason = ne.Reason
		}
		return 0, reason + "; " + rangeMessage(sp, integer, infOK, label, unit, zeroMeans)
	}
	if !numberOK(v, sp, integer, infOK) {
		return 0, rangeMessage(sp, integer, infOK, label, unit, zeroMeans)
	}
	return v, ""
}

// rangeMessage says what a number key accepts, as in
// "width must be between 220n and 1m (m)".
func rangeMessage(sp span, integer, infOK bool, label, unit, zeroMeans string) string {
	var b strings.Builder
	b.WriteString(label)
	b.WriteString(" must be ")
	if integer {
		b.WriteString("a whole number ")
	}
	if sp.zeroOK {
		b.WriteString("0 (" + zeroMeans + ") or ")
	}
	bound := func(v float64, name string) {
		if name != "" {
			b.WriteString(name + " = ")
		}
		b.WriteString(units.Exact(v))
	}
	switch {
	case !sp.loOpen && !sp.hiOpen:
		b.WriteString("between ")
	case sp.loOpen:
		b.WriteString("above ")
	default:
		b.WriteString("at least ")
	}
	bound(sp.lo, sp.loName)
	switch {
	case !sp.loOpen && !sp.hiOpen:
		b.WriteString(" and ")
	case sp.hiOpen:
		b.WriteString(" and below ")
	default:
		b.WriteString(" and at most ")
	}
	bound(sp.hi, sp.hiName)
	if unit != "" {
		b.WriteString(" (" + unit + ")")
	}
	if infOK {
		b.WriteString(", or inf")
	}
	if sp.note != "" {
		b.WriteString(": " + sp.note)
	}
	return b.String()
}

func escapeReason(err error) string {
	var ee escapeError
	if errors.As(err, &ee) {
		return "invalid escape " + strconv.Quote(string(ee))
	}
	return err.Error()
}

// unknownKeyMessage is what Decode says about a key it does not know,
// with a suggestion when one is near.
func unknownKeyMessage(key, what string) string {
	if lower := strings.ToLower(key); lower != key && isKnownKey(lower) {
		return what + ": keys are lower case (did you mean " + strconv.Quote(lower) + "?)"
	}
	if near := nearestKey(key); near != "" {
		return what + " (did you mean " + strconv.Quote(near) + "?)"
	}
	return what
}

func isKnownKey(key string) bool {
	if _, ok := keyIndex[key]; ok {
		return true
	}
	_, _, ok := lookupOverride(key)
	return ok
}

// nearestKey returns the known key nearest to key by edit distance, if one
// is within 2 edits and the edits do not replace all of key ("x" suggests
// nothing rather than "v"); ties go to the earlier key in the table.
func nearestKey(key string) string {
	best, bestDist := "", min(3, len(key))
	try := func(k string) {
		if d := editDistance(key, k, bestDist); d < bestDist {
			best, bestDist = k, d
		}
	}
	for i := range keyTable {
		try(keyTable[i].name)
	}
	for _, k := range overrideKeys {
		try(k)
	}
	for _, pol := range [...]string{"n.", "p."} { // old names, suggested by their new ones
		for i := range overrideParams {
			f := &overrideParams[i]
			if d := editDistance(key, pol+f.old, bestDist); f.old != "" && d < bestDist {
				best, bestDist = pol+f.name, d
			}
		}
	}
	return best
}

// editDistance returns the Levenshtein distance between a and b (bytes),
// or limit when it is at least limit. Keys are short, so two rows on the
// stack suffice; longer inputs count as too far.
func editDistance(a, b string, limit int) int {
	const maxLen = 15
	if len(a)-len(b) >= limit || len(b)-len(a) >= limit || len(a) > maxLen || len(b) > maxLen {
		return limit
	}
	var prev, cur [maxLen + 1]int
	for j := 0; j <= len(b); j++ {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev = cur
	}
	return min(prev[len(b)], limit)
}

// Encode writes the canonical fragment of d, without the leading '#'.
//
// The keys come in the fixed order of the key table (v stage pol proc vdd
// temp w l bias id gmid vin vg vout load rd rs lw ll vbl rsig rl cl fmin
// fmax ppd nlo nhi, then the design aids corner amp mc seed t.gain t.f3db
// t.gbw t.idd t.power t.swing t.noise t.margin vary lo.w hi.w lo.l hi.l
// lo.id hi.id lo.rd hi.rd lo.rs hi.rs hard obj lo.lw hi.lw lo.ll hi.ll lo.vout
// hi.vout sw sw.lo sw.hi sw.n pin), then the
// overrides sorted by key. Every key of the design itself that matters for
// the stage, load and bias mode is written, even at its default, so a link
// keeps its meaning if a default changes later; any other key, and every
// key of the design aids, is written only when it differs from its default.
// A pinned design is written as its own canonical fragment, percent-encoded. Numbers are written by
// units.Exact, so Decode reads back the same float64 bit for bit; ppd is a
// whole number and an infinite rl is "inf".
//
// For every design that passes Validate and has nil rather than empty
// Overrides (as Default and Decode make it), Decode(d.Encode()) returns d.
// A design that does not pass is still written, bad values and all, and
// Decode reports them.
func (d Design) Encode() string {
	var buf [768]byte
	return string(d.appendFragment(buf[:0]))
}

func (d *Design) appendFragment(b []byte) []byte {
	pr := lookupProcess(d.Process)
	first := true
	pair := func(key string) {
		if !first {
			b = append(b, '&')
		}
		first = false
		b = append(b, key...)
		b = append(b, '=')
	}
	for i := range keyTable {
		k := &keyTable[i]
		relevant := k.relevant(d) && !k.optional
		switch {
		case k.isText():
			if t := k.writeText(d); relevant || t != k.defText {
				pair(k.name)
				b = append(b, t...)
			}
		case k.isWord():
			w := k.getWord(d)
			if relevant || w != k.defWord {
				pair(k.name)
				b = append(b, w...)
			}
		default:
			v := k.get(d)
			if relevant || v != k.def(pr, d) {
				pair(k.name)
				b = appendNumber(b, v, k.integer, k.infOK)
			}
		}
		if k.setsProcess {
			pr = lookupProcess(d.Process)
		}
	}
	overrides := d.Overrides
	if !slices.IsSortedFunc(overrides, compareOverrides) {
		overrides = slices.SortedFunc(slices.Values(overrides), compareOverrides)
	}
	for _, o := range overrides {
		pair(o.Key)
		if o.L != 0 {
			b = b[:len(b)-1] // the '=' pair wrote
			b = append(b, '@')
			b = units.AppendExact(b, o.L)
			b = append(b, '=')
		}
		b = units.AppendExact(b, o.Value)
	}
	return b
}

// compareOverrides orders overrides by key, then by bin length (every
// length, 0, first).
func compareOverrides(a, b Override) int {
	if c := strings.Compare(a.Key, b.Key); c != 0 {
		return c
	}
	return cmp.Compare(a.L, b.L)
}

// binLengthMessage says that a bin length lies outside the process's
// lengths.
func binLengthMessage(pr *device.Process, l float64) string {
	return "the bin length " + units.Exact(l) + " m is outside " + pr.Name + "'s channel lengths " +
		units.Exact(pr.LMin) + " … " + units.Exact(pr.LMax) + " m"
}

// overrideName writes an override's key as a fragment does: "n.thresh",
// or "n.thresh@180n" for a bin.
func overrideName(o Override) string {
	if o.L == 0 {
		return o.Key
	}
	return o.Key + "@" + units.Exact(o.L)
}

func appendNumber(b []byte, v float64, integer, infOK bool) []byte {
	switch {
	case infOK && math.IsInf(v, 1):
		return append(b, "inf"...)
	case integer && v == math.Trunc(v) && math.Abs(v) < 1<<53:
		return strconv.AppendInt(b, int64(v), 10)
	}
	return units.AppendExact(b, v)
}

// Validate checks d with the same rules as Decode: every value in its range
// (given the keys before it, as in vin ≤ vdd), every word one of those
// accepted, overrides known, in range, sorted by key and each given once.
// It returns nil or a *FragmentError listing every problem, with the value
// as Encode would write it.
func (d Design) Validate() error {
	var problems []Problem
	pr := lookupProcess(defaultProcess)
	for i := range keyTable {
		k := &keyTable[i]
		if k.isText() {
			if msg := k.checkText(&d); msg != "" {
				problems = append(problems, Problem{k.name, k.writeText(&d), msg})
			}
		} else if k.isWord() {
			w := k.getWord(&d)
			if _, ok := matchWord(k.words(&d), w); !ok {
				problems = append(problems, Problem{k.name, w, k.wordMessage(&d)})
			}
		} else {
			v := k.get(&d)
			if msg := k.check(pr, &d, v); msg != "" {
				text := string(appendNumber(nil, v, k.integer, k.infOK))
				problems = append(problems, Problem{k.name, text, msg})
			}
		}
		if k.setsProcess {
			pr = lookupProcess(d.Process)
		}
	}
	pr = lookupProcess(d.Process)
	for i, o := range d.Overrides {
		// The key and value are written out only for a problem: this loop
		// runs on every evaluation.
		problem := func(msg string) {
			problems = append(problems, Problem{overrideName(o), units.Exact(o.Value), msg})
		}
		f, ref, ok := lookupOverride(o.Key)
		switch {
		case !ok:
			problem(unknownKeyMessage(o.Key, "unknown process parameter"))
		case ref.key() != o.Key:
			problem("write the parameter by its current name, " + ref.key())
		case !numberOK(o.Value, f.span(), false, false):
			problem(rangeMessage(f.span(), false, false, f.label, f.unit, f.zeroMeans))
		}
		if o.L != 0 && !(o.L >= pr.LMin && o.L <= pr.LMax) {
			problem(binLengthMessage(pr, o.L))
		}
		if o.L != 0 && ok && f.spread != nil {
			problem("a figure of the whole process's spread takes no length")
		}
		if i > 0 && compareOverrides(d.Overrides[i-1], o) >= 0 {
			problem("overrides must be sorted by key and length, each once (after " + strconv.Quote(overrideName(d.Overrides[i-1])) + ")")
		}
	}
	for _, pol := range [...]byte{'n', 'p'} {
		if key, msg := dopingProblem(pr, d.Overrides, pol); key != "" {
			j := slices.IndexFunc(d.Overrides, func(o Override) bool { return o.Key == key && o.L == 0 })
			problems = append(problems, Problem{key, units.Exact(d.Overrides[j].Value), msg})
		}
	}
	if len(problems) == 0 {
		return nil
	}
	return &FragmentError{Problems: problems}
}

// dopingProblem checks the one rule that ties two parameters together: a
// surface potential phi of 0 asks for 2φF to be derived from the doping
// nsub, so both cannot be 0. It returns the override of polarity pol to
// blame (phi when it is overridden, else nsub) and the message, or "" when
// the rule holds or no override of pol takes part.
func dopingProblem(pr *device.Process, overrides []Override, pol byte) (key, message string) {
	phiKey, nsubKey, params := "n.surface", "n.doping", &pr.N
	if pol == 'p' {
		phiKey, nsubKey, params = "p.surface", "p.doping", &pr.P
	}
	phi, nsub := params.Phi, params.NSub
	phiSet, nsubSet := false, false
	for _, o := range overrides {
		if o.L != 0 {
			continue // a bin's sets are checked whole by ProcessOf
		}
		switch o.Key {
		case phiKey:
			phi, phiSet = o.Value, true
		case nsubKey:
			nsub, nsubSet = o.Value, true
		}
	}
	if phi != 0 || nsub != 0 {
		return "", ""
	}
	switch {
	case phiSet:
		return phiKey, "surface potential 0 means it is derived from the doping, so " + nsubKey +
			" must be given too (1e20 … 1e26 m⁻³)"
	case nsubSet:
		return nsubKey, "substrate doping must be between 1e20 and 1e26 (m⁻³): this process derives 2φF from it"
	}
	return "", ""
}
