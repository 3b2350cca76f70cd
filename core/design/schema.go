package design

import (
	"math"
	"slices"
	"strings"

	"stagewright/core/device"
	"stagewright/core/units"
)

// KeyInfo describes one fragment key for the page, which builds its
// controls from it. Numbers are SI (temp in °C); JSON names are snake_case.
type KeyInfo struct {
	Key   string `json:"key"`
	Group string `json:"group"` // one of the Group constants
	Label string `json:"label"` // plain words of the trade, lower case
	Unit  string `json:"unit"`  // "" for a pure number or a word

	// Default is the default of a number key; DefaultWord that of a word
	// key, or "inf" for a number key whose default is infinite (rl), in
	// which case Default is 0.
	Default     float64 `json:"default"`
	DefaultWord string  `json:"default_word,omitempty"`
	// StageDefaults gives the default for the stages where it differs from
	// Default (rs: 10 kΩ for sf).
	StageDefaults map[string]float64 `json:"stage_defaults,omitempty"`

	// Min and Max bound a number key. MinFrom / MaxFrom name the key a bound
	// follows ("vdd"), in which case Min / Max hold the value that bound has
	// in the default design. An exclusive bound is not itself accepted.
	Min          float64 `json:"min"`
	Max          float64 `json:"max"`
	MinFrom      string  `json:"min_from,omitempty"`
	MaxFrom      string  `json:"max_from,omitempty"`
	MinExclusive bool    `json:"min_exclusive,omitempty"`
	MaxExclusive bool    `json:"max_exclusive,omitempty"`
	Log          bool    `json:"log"`               // a slider for it is logarithmic
	Integer      bool    `json:"integer,omitempty"` // whole numbers only
	// ZeroMeans, when set, says what 0 means; 0 is then accepted even when
	// Min is above it.
	ZeroMeans string `json:"zero_means,omitempty"`

	// Choices are the words a word key accepts, or the words a number key
	// accepts besides numbers (rl: "inf"), or the parts a text key is
	// made of, joined by Separator (vary: "w.l.id").
	Choices   []string `json:"choices,omitempty"`
	Separator string   `json:"separator,omitempty"`
	// Text says a key is neither a number nor one word (vary, pin); Accepts
	// then says in words what it takes.
	Text    bool   `json:"text,omitempty"`
	Accepts string `json:"accepts,omitempty"`

	// Stages, Loads and Biases say where the key matters (empty: always):
	// the union over When. When is the exact rule: the key matters when any
	// one condition holds (rs: for cs with any load, and for sf with load r).
	Stages []string    `json:"stages,omitempty"`
	Loads  []string    `json:"loads,omitempty"`
	Biases []string    `json:"biases,omitempty"`
	When   []Condition `json:"when,omitempty"`

	Doc string `json:"doc"` // one line
}

// Schema returns the key table for the built-in process proc ("" or an
// unknown name: d180): the plain keys in canonical order, then every
// process-parameter override ("n.body" … "p.velsat") with the process's value as
// its default. The result is freshly allocated and safe to marshal as JSON
// (no infinities).
func Schema(proc string) []KeyInfo {
	d := Default(proc)
	pr := lookupProcess(d.Process)
	infos := make([]KeyInfo, 0, numKeys+len(overrideKeys))
	for i := range keyTable {
		k := &keyTable[i]
		info := KeyInfo{Key: k.name, Group: k.group, Label: k.label, Unit: k.unit, Doc: k.doc, ZeroMeans: k.zeroMeans}
		if len(k.when) > 0 {
			info.When = k.when
			info.Stages, info.Loads, info.Biases = union(k.when)
		}
		switch {
		case k.isText():
			info.Text, info.Accepts, info.DefaultWord = true, k.accepts, k.defText
			info.Choices, info.Separator = append([]string(nil), k.choices...), k.separator
		case k.isWord():
			info.DefaultWord = k.defWord
			info.Choices = append([]string(nil), k.words(&d)...)
		default:
			// Spans and defaults read only the keys before them, which in the
			// default design hold their defaults.
			sp := k.span(pr, &d)
			info.Min, info.Max = sp.lo, sp.hi
			info.MinFrom, info.MaxFrom = sp.loName, sp.hiName
			info.MinExclusive, info.MaxExclusive = sp.loOpen, sp.hiOpen
			info.Log, info.Integer = k.log, k.integer
			if def := k.def(pr, &d); math.IsInf(def, 1) {
				info.DefaultWord = "inf"
			} else {
				info.Default = def
			}
			if k.infOK {
				info.Choices = []string{"inf"}
			}
			for _, st := range stageWords {
				alt := d
				alt.Stage = Stage(st)
				if v := k.def(pr, &alt); v != info.Default && !math.IsInf(v, 0) {
					if info.StageDefaults == nil {
						info.StageDefaults = map[string]float64{}
					}
					info.StageDefaults[st] = v
				}
			}
		}
		infos = append(infos, info)
	}
	for _, key := range overrideKeys {
		f, ref, _ := lookupOverride(key)
		params, pol, kind := pr.N, device.NMOS, "NMOS"
		if ref.pol == 'p' {
			params, pol, kind = pr.P, device.PMOS, "PMOS"
		}
		var def float64
		if f.spread != nil {
			sp := pr.Spread(pol)
			def = *f.spread(&sp)
		} else {
			def = *f.field(&params)
		}
		infos = append(infos, KeyInfo{
			Key: key, Group: GroupProcess, Label: kind + " " + f.label, Unit: f.unit,
			Default: def, Min: f.lo, Max: f.hi, Log: f.log, ZeroMeans: f.zeroMeans,
			Doc: kind + ": " + f.doc,
		})
	}
	return infos
}

// union returns the stages, loads and bias modes of conds together; a
// dimension that any condition leaves open stays open (nil).
func union(conds []Condition) (stages, loads, biases []string) {
	merge := func(pick func(Condition) []string) []string {
		var out []string
		for _, c := range conds {
			list := pick(c)
			if len(list) == 0 {
				return nil
			}
			for _, s := range list {
				if !slices.Contains(out, s) {
					out = append(out, s)
				}
			}
		}
		return out
	}
	return merge(func(c Condition) []string { return c.Stages }),
		merge(func(c Condition) []string { return c.Loads }),
		merge(func(c Condition) []string { return c.Biases })
}

// KeyTableMarkdown renders the key table for d180 as a Markdown table with
// the columns key, meaning, default (d180) and accepted, for the README.
func KeyTableMarkdown() string {
	var b strings.Builder
	b.WriteString("| key | meaning | default (d180) | accepted |\n|---|---|---|---|\n")
	for _, k := range Schema(defaultProcess) {
		b.WriteString("| `" + k.Key + "` | " + cell(k.Doc) + " | " + cell(defaultText(k)) + " | " + cell(acceptedText(k)) + " |\n")
	}
	return b.String()
}

func defaultText(k KeyInfo) string {
	text := k.DefaultWord
	if k.Text && text == "" {
		return "none"
	}
	if text == "" {
		text = units.Exact(k.Default)
	}
	for _, st := range stageWords {
		if v, ok := k.StageDefaults[st]; ok {
			text += " (" + st + ": " + units.Exact(v) + ")"
		}
	}
	return text
}

func acceptedText(k KeyInfo) string {
	if k.Text {
		return k.Accepts
	}
	if k.Unit == "" && k.Min == 0 && k.Max == 0 && len(k.Choices) > 0 {
		return strings.Join(k.Choices, ", ")
	}
	bound := func(v float64, from string, exclusive bool, rel string) string {
		s := units.Exact(v)
		if from != "" {
			s = from
		}
		if exclusive {
			s = rel + " " + s
		}
		return s
	}
	text := bound(k.Min, k.MinFrom, k.MinExclusive, ">") + " … " + bound(k.Max, k.MaxFrom, k.MaxExclusive, "<")
	if k.Unit != "" {
		text += " " + k.Unit
	}
	if k.ZeroMeans != "" && k.Min > 0 {
		text = "0 (" + k.ZeroMeans + ") or " + text
	} else if k.ZeroMeans != "" {
		text += " (0: " + k.ZeroMeans + ")"
	}
	if k.Integer {
		text += ", whole numbers"
	}
	for _, c := range k.Choices {
		text += ", or " + c
	}
	if len(k.When) > 0 {
		text += "; used for " + whenText(k.When)
	}
	return text
}

func whenText(conds []Condition) string {
	parts := make([]string, 0, len(conds))
	for _, c := range conds {
		var p []string
		if len(c.Stages) > 0 {
			p = append(p, "stage "+strings.Join(c.Stages, "/"))
		}
		if len(c.Loads) > 0 {
			p = append(p, "load "+strings.Join(c.Loads, "/"))
		}
		if len(c.Biases) > 0 {
			p = append(p, "bias "+strings.Join(c.Biases, "/"))
		}
		parts = append(parts, strings.Join(p, " with "))
	}
	return strings.Join(parts, "; ")
}

// cell escapes text for a Markdown table cell.
func cell(text string) string {
	return strings.ReplaceAll(text, "|", `\|`)
}
