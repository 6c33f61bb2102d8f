package jcampdx_test

import (
	"fmt"
	"strings"

	"bandedge/io/jcampdx"
)

// A JCAMP-DX file with its ordinates in DIF/DUP form (the worked example of
// the tests: see reader_test.go for the hand encoding).
func ExampleReader() {
	const file = `##TITLE= invented example, not a measurement
##JCAMP-DX= 4.24
##DATA TYPE= UV/VIS SPECTRUM
##XUNITS= NANOMETERS
##YUNITS= TRANSMITTANCE
##XFACTOR= 1
##YFACTOR= 0.001
##FIRSTX= 800
##LASTX= 900
##NPOINTS= 11
##XYDATA=(X++(Y..Y))
800A20N%TO
840A31J19J70J80%k
890E98o01
900c
##END=
`
	if !jcampdx.Sniff([]byte(file)) {
		fmt.Println("not JCAMP-DX")
		return
	}
	s, err := jcampdx.NewReader(strings.NewReader(file), "example.jdx").Read()
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%d points, %v, E %.4g … %.4g eV\n", s.Len(), s.Kind, s.E[0], s.E[s.Len()-1])
	for i := s.Len() - 3; i < s.Len(); i++ {
		fmt.Printf("E %.4g eV  T %.4g  (line %d)\n", s.E[i], s.Y[i], s.Lines[i])
	}

	bad := strings.Replace(file, "840A31", "840A32", 1) // corrupt a Y check value
	_, err = jcampdx.NewReader(strings.NewReader(bad), "example.jdx").Read()
	fmt.Println(err)
	// Output:
	// 11 points, T, E 1.378 … 1.55 eV
	// E 1.512 eV  T 0.125  (line 12)
	// E 1.531 eV  T 0.125  (line 12)
	// E 1.55 eV  T 0.12  (line 12)
	// example.jdx:13:4: Y check value 132 does not match the last ordinate 131 of line 12: a character is corrupt or a line is missing
}
