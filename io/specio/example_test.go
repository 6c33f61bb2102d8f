package specio_test

import (
	"fmt"
	"strings"

	"bandedge/io/specio"
)

func ExampleReader() {
	// An invented export: a semicolon-separated file with decimal commas,
	// a preamble and wavelength descending, as some instruments write it.
	const export = `Instrument: DEMO-SPEC 1 (invented)
Sample;W07
Wavelength [nm];T [%]
900;54,2
880;41,0
860;0,3
`
	r := specio.NewReader(strings.NewReader(export), "w07.csv")
	s, err := r.Read()
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("sample", s.Meta["Sample"], "| kind", s.Kind, "| read as", s.SourceXUnit, s.SourceYKind)
	for i := range s.E {
		fmt.Printf("line %d: E = %.4g eV, T = %.4g\n", s.Lines[i], s.E[i], s.Y[i])
	}

	// A header that does not say what y is: the error says which flag to pass.
	_, err = specio.NewReader(strings.NewReader("Wavelength (nm),Signal\n500,1\n600,2\n"), "w08.csv").Read()
	fmt.Println(err)
	// Output:
	// sample W07 | kind T | read as nm T%
	// line 4: E = 1.378 eV, T = 0.542
	// line 5: E = 1.409 eV, T = 0.41
	// line 6: E = 1.442 eV, T = 0.003
	// w08.csv:1:17: cannot tell what column 2 "Signal" holds; pass --y-kind (T, T%, A, alpha)
}

func ExampleParseXUnit() {
	u, err := specio.ParseXUnit("cm^-1")
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%v: 8065.544 cm-1 is %.4g eV\n", u, u.Energy(8065.544))
	_, err = specio.ParseXUnit("meV")
	fmt.Println(err)
	// Output:
	// cm-1: 8065.544 cm-1 is 1 eV
	// specio: unknown unit: x unit "meV" (want nm, um, ev or cm-1)
}
