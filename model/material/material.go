// Package material holds presets of common semiconductors: the inputs a
// band-edge analysis needs besides the spectrum (refractive index near the
// edge, effective masses, the temperature dependence of the gap) and the
// handbook values a result can be compared with.
//
// Every number here was written from memory of the cited handbook or
// review and is marked so; check the source before quoting one. They are
// defaults a user can override with flags, never silent corrections. Only
// materials whose numbers we could check against an independent handbook
// value are included (the tests do that check).
package material

import (
	"errors"
	"fmt"
	"sort"
	"strings"
)

// Material is one preset.
type Material struct {
	// Name is the preset's name, e.g. "GaAs".
	Name string
	// Indirect is true for an indirect-gap material.
	Indirect bool
	// Eg0, A and B are the Varshni parameters (Varshni, Physica 34, 149,
	// 1967): E_g(T) = Eg0 − A·T²/(T + B), Eg0 in eV, A in eV/K, B in K.
	Eg0, A, B float64
	// Index is a typical refractive index just above the gap.
	Index float64
	// ElectronMass and HoleMass are effective masses in m₀ (for a direct
	// gap: the Γ-valley electron and the heavy hole); 0 where no single
	// value applies (indirect gaps).
	ElectronMass, HoleMass float64
	// KaneEnergy is the Kane energy E_P in eV (0 where not applicable).
	KaneEnergy float64
	// Source names where the numbers come from (all from memory).
	Source string
}

// Gap returns E_g(T) in eV from the Varshni parameters.
func (m Material) Gap(t float64) float64 { return m.Eg0 - m.A*t*t/(t+m.B) }

// DGapDT returns dE_g/dT in eV/K at temperature t (K):
//
//	dE_g/dT = −A·T·(T + 2B)/(T + B)²
func (m Material) DGapDT(t float64) float64 {
	return -m.A * t * (t + 2*m.B) / ((t + m.B) * (t + m.B))
}

// TypicalDGapDT is the temperature coefficient of the gap used when no
// material is named: −0.45 meV/K, a typical value near room temperature
// for III–V semiconductors (common practice; GaAs is about −0.45 meV/K from
// the Varshni parameters below).
const TypicalDGapDT = -4.5e-4

const (
	vurgaftman = "Vurgaftman, Meyer & Ram-Mohan, J. Appl. Phys. 89, 5815, 2001 (from memory)"
	thurmond   = "Thurmond, J. Electrochem. Soc. 122, 1133, 1975 (from memory); index from memory"
)

var presets = map[string]Material{
	"gaas": {Name: "GaAs", Eg0: 1.519, A: 0.5405e-3, B: 204, Index: 3.6, ElectronMass: 0.067, HoleMass: 0.51, KaneEnergy: 28.8, Source: vurgaftman},
	"si":   {Name: "Si", Indirect: true, Eg0: 1.170, A: 4.73e-4, B: 636, Index: 3.56, Source: thurmond},
	"ge":   {Name: "Ge", Indirect: true, Eg0: 0.7437, A: 4.774e-4, B: 235, Index: 4.0, Source: thurmond},
}

// ErrUnknown is returned by Lookup for a name it does not know.
var ErrUnknown = errors.New("material: unknown material")

// Lookup returns the preset called name (case-insensitive).
func Lookup(name string) (Material, error) {
	m, ok := presets[strings.ToLower(strings.TrimSpace(name))]
	if !ok {
		return Material{}, fmt.Errorf("%w %q (known: %s)", ErrUnknown, name, strings.Join(Names(), ", "))
	}
	return m, nil
}

// Names lists the presets.
func Names() []string {
	var n []string
	for _, m := range presets {
		n = append(n, m.Name)
	}
	sort.Strings(n)
	return n
}
