package optics_test

import (
	"bytes"
	"encoding/binary"
	"errors"
	"math"
	"os"
	"path/filepath"
	"testing"

	"bandedge/io/specio"
	"bandedge/model/optics"
)

// fzMaxPoints bounds the spectra of FuzzToAlphaSpectrum; ToAlpha is linear
// in the length, so longer spectra find nothing new.
const fzMaxPoints = 4096

// fzEncode is the input layout of FuzzToAlphaSpectrum: per point the
// float64 values ΔE (the energy step from the previous point; the first is
// the energy itself), y and R, little-endian.
func fzEncode(e, y, r []float64) []byte {
	var b []byte
	prev := 0.0
	for i := range e {
		rv := 0.3
		if r != nil {
			rv = r[i]
		}
		for _, v := range []float64{e[i] - prev, y[i], rv} {
			b = binary.LittleEndian.AppendUint64(b, math.Float64bits(v))
		}
		prev = e[i]
	}
	return b
}

// FuzzToAlphaSpectrum converts arbitrary spectra of any length: energies
// from steps (ascending unless a step is negative, zero or not finite, so
// that both the checks and the conversion are reached), ordinates and a
// measured R per point from the input, and the kind, the reflectance
// source (none, constant, measured R column, refractive index), the
// thickness, σ_T (given or estimated), σ_R and the absorbance floor from
// the flags. The contract of ToAlpha: never a panic; either an error
// wrapping one of the package's sentinels and no result, or a result with
// one α, σ, mask and reason per point whose counts add up to the length,
// Mask true exactly where the reason is Usable, a finite α and a finite
// positive σ at every usable point, a finite positive σ_T for
// transmittance and absorbance, and a used R in [0, 1) or NaN.
//
// Seeds: the example exports of testdata/specio read with io/specio (E,
// the ordinate in its kind, and R where the file has it).
func FuzzToAlphaSpectrum(f *testing.F) {
	files, err := filepath.Glob(filepath.Join("..", "..", "testdata", "specio", "*"))
	if err != nil || len(files) == 0 {
		f.Fatalf("no seeds: %v", err)
	}
	for i, name := range files {
		b, err := os.ReadFile(name)
		if err != nil {
			f.Fatal(err)
		}
		s, err := specio.NewReader(bytes.NewReader(b), name).Read()
		if err != nil {
			continue
		}
		kind := map[specio.YKind]uint16{specio.Transmittance: 0, specio.Absorbance: 1, specio.Alpha: 2}[s.Kind]
		src := uint16(i % 4)
		if s.R != nil {
			src = 2
		}
		f.Add(fzEncode(s.E, s.Y, s.R), kind|src<<2|uint16(i)<<4, 2e-4)
	}
	f.Add([]byte{}, uint16(0), 1.0)
	f.Add(fzEncode([]float64{1, 1, 2}, []float64{math.NaN(), -1, 2}, []float64{1, -0.1, math.Inf(1)}), uint16(0xffff), math.NaN())
	sentinels := []error{optics.ErrNoData, optics.ErrLength, optics.ErrEnergy, optics.ErrThickness, optics.ErrKind,
		optics.ErrReflectance, optics.ErrSettings, optics.ErrNoise}
	f.Fuzz(func(t *testing.T, data []byte, flags uint16, d float64) {
		var e, y, r []float64
		prev := 0.0
		for len(data) >= 24 && len(e) < fzMaxPoints {
			v := func(k int) float64 { return math.Float64frombits(binary.LittleEndian.Uint64(data[8*k:])) }
			prev += v(0)
			e, y, r = append(e, prev), append(y, v(1)), append(r, v(2))
			data = data[24:]
		}
		kind := []optics.Kind{optics.Transmittance, optics.Absorbance, optics.AlphaInput, optics.Kind(flags % 7)}[flags&3]
		s := &optics.Settings{}
		switch flags >> 2 & 3 {
		case 1:
			s.RConst = 0.3
		case 2:
			s.R = r
		case 3:
			s.Index = optics.ConstIndex(1 + float64(flags>>4&0xff)/32)
		}
		if flags&(1<<12) != 0 {
			s.SigmaT = 0.002
		}
		if flags&(1<<13) != 0 {
			s.SigmaR = 0.01
		}
		if flags&(1<<14) != 0 {
			s.MaxAbsorbance = 2
		}
		res, err := optics.ToAlpha(e, y, kind, d, s)
		if err != nil {
			if res != nil {
				t.Fatalf("result and error %v together", err)
			}
			for _, s := range sentinels {
				if errors.Is(err, s) {
					return
				}
			}
			t.Fatalf("error %v wraps no sentinel", err)
		}
		n := len(e)
		if len(res.Alpha) != n || len(res.Sigma) != n || len(res.Mask) != n || len(res.Reason) != n {
			t.Fatalf("lengths %d, %d, %d, %d for %d points", len(res.Alpha), len(res.Sigma), len(res.Mask), len(res.Reason), n)
		}
		total := 0
		for _, c := range res.Counts {
			total += c
		}
		if total != n {
			t.Fatalf("counts %v add up to %d, not %d", res.Counts, total, n)
		}
		for i := range n {
			if res.Mask[i] != (res.Reason[i] == optics.Usable) {
				t.Fatalf("point %d: mask %v, reason %v", i, res.Mask[i], res.Reason[i])
			}
			if !res.Mask[i] {
				continue
			}
			a, sg := res.Alpha[i], res.Sigma[i]
			if math.IsNaN(a) || math.IsInf(a, 0) || !(sg > 0) || math.IsInf(sg, 0) {
				t.Fatalf("usable point %d: α %v, σ %v (y %v)", i, a, sg, y[i])
			}
		}
		if kind != optics.AlphaInput {
			if !(res.SigmaT > 0) || math.IsInf(res.SigmaT, 0) || len(res.T) != n || len(res.R) != n {
				t.Fatalf("σ_T %v, %d T, %d R", res.SigmaT, len(res.T), len(res.R))
			}
			for i, v := range res.R {
				if !math.IsNaN(v) && !(v >= 0 && v < 1) {
					t.Fatalf("R[%d] = %v", i, v)
				}
			}
		}
	})
}
