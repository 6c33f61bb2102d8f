package selfcheck

import "bandedge/model"

// kaneSource names the formula's source; the reference values are the
// project's worked example computed from it (PHYSICS.md 3.1).
const kaneSource = "Chuang, Physics of Photonic Devices, 2009 (Kane k·p); worked example, inputs from memory"

// The GaAs-like inputs of the worked example, from memory (E_P from
// Vurgaftman, Meyer & Ram-Mohan, J. Appl. Phys. 89, 5815, 2001; n and
// the masses common handbook values): E_P in eV, masses in m₀, E_g in eV.
const (
	kaneEP = 28.8
	kaneN  = 3.6
	kaneMe = 0.067
	kaneMh = 0.51
	kaneEg = 1.424
)

// Kane returns the checks of the worked example of the Kane chain,
// computed with CODATA 2018 constants from the GaAs-like inputs above
// (inputs from memory): m_r = 0.0592 m₀, A_P = 2.93e-16 cm²·eV²,
// α(E_g + 0.1 eV) = 5.96e3 cm⁻¹ and α(E_g + 0.2 eV) = 7.91e3 cm⁻¹. The
// reference values carry three digits, so each tolerance is half a unit in
// the third digit, relative to the value.
func Kane() []Check {
	mr := model.ReducedMass(kaneMe, kaneMh)
	c := model.AmplitudeFromKane(kaneEP, kaneN, mr)
	a := make([]float64, 2)
	model.Direct{}.Eval(a, []float64{kaneEg + 0.1, kaneEg + 0.2}, []float64{kaneEg, c})
	return []Check{
		newCheck("Kane m_r", kaneSource, "reduced mass (m₀), m_e=0.067, m_h=0.51", mr, 0.0592, 0.00005/0.0592),
		newCheck("Kane A_P", kaneSource, "A_P (cm²·eV²), E_P=28.8 eV, n=3.6", model.KaneAP(kaneEP, kaneN), 2.93e-16, 0.005/2.93),
		newCheck("Kane α(E_g+0.1 eV)", kaneSource, "α (cm⁻¹), direct edge, E_g=1.424 eV", a[0], 5.96e3, 5/5.96e3),
		newCheck("Kane α(E_g+0.2 eV)", kaneSource, "α (cm⁻¹), direct edge, E_g=1.424 eV", a[1], 7.91e3, 5/7.91e3),
	}
}
