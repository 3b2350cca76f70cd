// Package design holds one amplifier design as the page and the command
// line share it: the Design struct, its defaults, the ranges each value may
// take, and its text form in the URL fragment.
//
// # Fragment
//
// A design travels as the fragment of a link, the part after '#':
//
//	v=1&stage=cs&pol=n&proc=d180&vdd=1.8&temp=27&w=10u&l=500n&bias=id&id=100u&load=r&rd=10k&…
//
// Pairs key=value are joined by '&'. Numbers are SI values with an optional
// prefix (f p n u m k M G) as read by package units; temp is in °C; a few
// keys take words (stage cs/cg/sf, bias vin/id/gmid, load r/active/diode).
// "n.KEY" and "p.KEY" override one process parameter of that polarity, as in
// n.vt0=0.5. [Decode] reads a fragment in any key order and always returns a
// usable design, together with a [*FragmentError] listing every problem;
// [Design.Encode] writes the canonical fragment, and Decode(d.Encode()) is d
// for every valid d.
//
// # Keys and defaults
//
// The key table in keys.go is the one source of truth: each row has a key's
// group, label, unit, default, range, slider scale and where it matters.
// [Default] gives the default design of a process, [Design.Validate] checks
// a design built in code with the same rules as Decode, [Schema] hands the
// table to the page as plain values and [KeyTableMarkdown] renders it for the
// README. A key's range and default may follow keys before it in the table:
// w and l the process limits, vin ≤ vdd, fmin < fmax, rs > 0 for a source
// follower with load r.
package design
