package stock

import (
	"strings"
)

// Dielectric names as NormalizeDielectric writes them.
const (
	C0G          = "C0G" // class 1 ceramic (EIA), zero temperature coefficient
	NP0          = "NP0" // class 1 ceramic (IEC name for the same behaviour)
	X7R          = "X7R" // class 2 ceramic
	X5R          = "X5R" // class 2 ceramic
	X7S          = "X7S" // class 2 ceramic
	X6S          = "X6S" // class 2 ceramic
	X8R          = "X8R" // class 2 ceramic
	Y5V          = "Y5V" // class 2 ceramic
	Z5U          = "Z5U" // class 2 ceramic
	PP           = "PP"  // polypropylene film
	PPS          = "PPS" // polyphenylene sulphide film
	PET          = "PET" // polyester (polyethylene terephthalate) film
	PEN          = "PEN" // polyethylene naphthalate film
	PS           = "PS"  // polystyrene film
	PTFE         = "PTFE"
	PC           = "PC" // polycarbonate film
	Mica         = "mica"
	Film         = "film" // film of unstated type
	Electrolytic = "electrolytic"
	Tantalum     = "tantalum"
)

// dielectricAliases maps lowercase spellings, with spaces, dashes and
// underscores removed, to the canonical name. Letter O for digit 0 in C0G
// and NP0 is a common misspelling (common practice, no source).
var dielectricAliases = map[string]string{
	"c0g": C0G, "cog": C0G, "npoc0g": C0G,
	"np0": NP0, "npo": NP0,
	"x7r": X7R, "x5r": X5R, "x7s": X7S, "x6s": X6S, "x8r": X8R, "y5v": Y5V, "z5u": Z5U,
	"pp": PP, "mkp": PP, "polypropylene": PP, "polypropylenefilm": PP, "ppfilm": PP,
	"pps": PPS, "polyphenylenesulphide": PPS, "polyphenylenesulfide": PPS,
	"pet": PET, "mkt": PET, "polyester": PET, "polyesterfilm": PET, "petfilm": PET,
	"pen": PEN, "polyethylenenaphthalate": PEN,
	"ps": PS, "polystyrene": PS, "polystyrenefilm": PS,
	"ptfe": PTFE, "pc": PC, "polycarbonate": PC, "mkc": PC,
	"mica": Mica, "silvermica": Mica,
	"film":         Film,
	"electrolytic": Electrolytic, "elco": Electrolytic, "elko": Electrolytic,
	"aluminiumelectrolytic": Electrolytic, "aluminumelectrolytic": Electrolytic,
	"alelectrolytic": Electrolytic, "alu": Electrolytic, "ecap": Electrolytic,
	"tantalum": Tantalum, "ta": Tantalum, "tant": Tantalum, "tantalumelectrolytic": Tantalum,
}

// precisionDielectrics are the dielectrics stable enough for a filter's
// signal path: class 1 ceramics and films (docs/check-values.md, "Practical rules",
// citing Op Amps for Everyone 16.8.3: C0G/NP0 preferred, high-K ceramics
// avoided; films by common practice, no source).
var precisionDielectrics = map[string]bool{
	C0G: true, NP0: true, PP: true, PPS: true, PET: true, PEN: true, PS: true,
	PTFE: true, PC: true, Mica: true, Film: true,
}

// NormalizeDielectric returns the canonical name of a dielectric (C0G, NP0,
// X7R, PP, PET, PS, mica, electrolytic, tantalum, ...), recognising common
// spellings in any case: "cog" and "npo" with the letter O, "polyester",
// "polypropylene", "polystyrene", "silver mica", "elko". A name it does not
// know is returned trimmed, with inner runs of spaces collapsed, and
// otherwise unchanged; "" stays "".
func NormalizeDielectric(d string) string {
	t := strings.Join(strings.Fields(d), " ")
	if t == "" {
		return ""
	}
	key := strings.Map(func(r rune) rune {
		switch r {
		case ' ', '-', '_', '/':
			return -1
		}
		return r
	}, strings.ToLower(t))
	if c, ok := dielectricAliases[key]; ok {
		return c
	}
	return t
}

// IsPrecisionDielectric reports whether a capacitor of dielectric d suits a
// filter's signal path: class 1 ceramics (C0G, NP0) and films (PP, PPS,
// PET, PEN, PS, PTFE, PC, mica, or plain "film") do; class 2 ceramics (X7R,
// X5R, Y5V, Z5U, ...), electrolytics, tantalum, an empty dielectric and any
// unknown name do not. d is normalised first.
func IsPrecisionDielectric(d string) bool { return precisionDielectrics[NormalizeDielectric(d)] }

// KnownDielectric reports whether d (in any spelling NormalizeDielectric
// accepts) is one of the dielectric names drawerfit knows.
func KnownDielectric(d string) bool {
	n := NormalizeDielectric(d)
	for _, c := range dielectricAliases {
		if c == n {
			return true
		}
	}
	return false
}
