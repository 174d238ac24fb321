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

// Grade says how a capacitor dielectric suits a filter's signal path.
type Grade uint8

const (
	// Avoid: class 2 ceramics (X7R, X5R, Y5V, Z5U, ...), electrolytics,
	// tantalum, and any dielectric not known or not stated. The fit uses
	// them only when allowed by name.
	Avoid Grade = iota
	// Caution: general-purpose films (polyester PET, PEN, polycarbonate,
	// film of unstated type). The fit uses them and says so: they are
	// stable enough for many filters, but their dielectric absorption and
	// their change of capacitance with temperature are larger than those
	// of the precision dielectrics, which audio builders avoid in the
	// signal path (common practice, no source).
	Caution
	// Precision: class 1 ceramics (C0G, NP0) and the low-loss films and
	// mica: polypropylene, polystyrene, PPS, PTFE and mica.
	Precision
)

// String names the grade: "precision", "caution" or "avoid".
func (g Grade) String() string {
	switch g {
	case Precision:
		return "precision"
	case Caution:
		return "caution"
	}
	return "avoid"
}

// grades lists the dielectrics that are not Avoid. Class 1 ceramics are
// preferred and high-K ceramics avoided in active filters (Op Amps for
// Everyone 16.8.3, as quoted in docs/check-values.md, "Practical rules");
// the grades of the films and mica are common practice, no source (the
// same section, "Dielectric grades drawerfit uses").
var grades = map[string]Grade{
	C0G: Precision, NP0: Precision, PP: Precision, PS: Precision, PPS: Precision, PTFE: Precision, Mica: Precision,
	PET: Caution, PEN: Caution, PC: Caution, Film: Caution,
}

// SignalGrade returns how dielectric d (in any spelling NormalizeDielectric
// accepts) suits a filter's signal path.
func SignalGrade(d string) Grade { return grades[NormalizeDielectric(d)] }

// SignalPathOK reports whether the fit uses a capacitor of dielectric d
// without being told to: Precision and Caution grades.
func SignalPathOK(d string) bool { return SignalGrade(d) != Avoid }

// CautionText says, in one sentence, why a Caution-grade dielectric is
// flagged; "" for the other grades.
func CautionText(d string) string {
	if SignalGrade(d) != Caution {
		return ""
	}
	name := NormalizeDielectric(d)
	what := map[string]string{PET: "polyester (PET)", PEN: "PEN film", PC: "polycarbonate", Film: "film of unstated type"}[name]
	return what + " capacitors: allowed, but their dielectric absorption and drift with temperature exceed those of C0G, polypropylene or polystyrene, " +
		"and audio builders keep them out of the signal path (common practice)"
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

// IsPrecisionDielectric reports whether d is of the Precision grade: C0G,
// NP0, polypropylene, polystyrene, PPS, PTFE or mica. Polyester and the
// other general-purpose films are not (SignalGrade says Caution; the fit
// still uses them, see SignalPathOK). d is normalised first.
func IsPrecisionDielectric(d string) bool { return SignalGrade(d) == Precision }

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
