package stock_test

import (
	"fmt"
	"os"
	"strings"

	"drawerfit/stock"
)

func ExampleParseValue() {
	for _, s := range []string{"4K7", "4.7 kΩ", "R47", "1M0", "47K3"} {
		v, _ := stock.ParseValue(s, stock.Resistor)
		fmt.Println(s, "=", v, "Ω")
	}
	for _, s := range []string{"2n2", "0.047uF", "p68"} {
		v, _ := stock.ParseValue(s, stock.Capacitor)
		fmt.Println(s, "=", v, "F")
	}
	_, err := stock.ParseValue("103", stock.Capacitor)
	fmt.Println(err)
	// Output:
	// 4K7 = 4700 Ω
	// 4.7 kΩ = 4700 Ω
	// R47 = 0.47 Ω
	// 1M0 = 1e+06 Ω
	// 47K3 = 47300 Ω
	// 2n2 = 2.2e-09 F
	// 0.047uF = 4.7e-08 F
	// p68 = 6.8e-13 F
	// capacitor value "103": a bare number is ambiguous for a capacitor; as the three-digit marking it would be 10 nF, written 10nF
}

func ExampleFormatValue() {
	fmt.Println(stock.FormatValue(4700, stock.Resistor))
	fmt.Println(stock.FormatValue(2.2e-9, stock.Capacitor))
	fmt.Println(stock.FormatValue(470e-12, stock.Capacitor))
	fmt.Println(stock.FormatValuePrec(3386.2746, stock.Resistor, 4))
	// Output:
	// 4.7 kΩ
	// 2.2 nF
	// 470 pF
	// 3.386 kΩ
}

func ExampleSeries_Neighbours() {
	// The ideal 3.386 kΩ of a first-order 1 kHz low-pass with 47 nF
	// (Op Amps for Everyone, 16.3) lies between these preferred values.
	for _, s := range []stock.Series{stock.E12, stock.E24, stock.E96} {
		lo, hi := s.Neighbours(3386)
		fmt.Println(s, lo, hi)
	}
	fmt.Println(stock.SeriesOf(4700))
	// Output:
	// E12 3300 3900
	// E24 3300 3600
	// E96 3320 3400
	// [E3 E6 E12 E24 E192]
}

func ExampleReadCSV() {
	in := "kind,value,quantity,tolerance,dielectric,location\n" +
		"R,4k7,50,1%,,A1\n" +
		"C,2n2,20,J,cog,C2\n"
	items, err := stock.ReadCSV(strings.NewReader(in))
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, it := range items {
		fmt.Println(it.Label(), "×", it.Quantity)
	}
	stock.WriteCSV(os.Stdout, items)

	_, err = stock.ReadCSV(strings.NewReader("kind,value,quantity\nR,4k7k,1\nC,2n2,-3\n"))
	fmt.Println(err)
	// Output:
	// 4.7 kΩ 1% @A1 × 50
	// 2.2 nF 5% C0G @C2 × 20
	// kind,value,tolerance,quantity,package,dielectric,location,note,voltage,price,min,pack,supplier-ref,channels,gbw,dc-gain,slew,supply
	// resistor,4.7k,1%,50,,,A1,,,,,,,,,,,
	// capacitor,2.2nF,5%,20,,C0G,C2,,,,,,,,,,,
	// the CSV file has 2 problems:
	//   line 2, value: resistor value "4k7k": ambiguous: a second multiplier "k" after a letter code
	//   line 3, quantity: quantity "-3" is negative
}
