// Package stock is the domain model of the parts drawer: what a stock row is,
// how resistor and capacitor values and tolerances are written (IEC 60062
// letter-and-digit codes, SI prefixes, plain numbers in base units), the IEC
// 60063 preferred-number series E3 to E192, capacitor dielectric classes, the
// CSV exchange format, and the Store interface that the SQLite store in
// package drawerfit/store implements.
//
// Values are held in SI base units (ohms, farads) as float64 and converted
// only at the edges: ParseValue reads text, FormatValue writes it. Parsing
// never guesses: text that could mean two things is refused with an error
// that quotes it.
//
// References: IEC 60062 (marking codes for resistors and capacitors), IEC
// 60063 (preferred number series for resistors and capacitors).
//
// The package imports no SQL, table or command-line library.
package stock
