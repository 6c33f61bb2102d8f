package model

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"
)

// ErrUnknownModel is returned by Lookup and New for a name they do not know.
var ErrUnknownModel = errors.New("model: unknown model")

// ErrCombination is returned by New for a band and tail that do not make a
// model (see New).
var ErrCombination = errors.New("model: band and tail do not combine")

// ErrTemperature is returned by New for the indirect band without a valid
// sample temperature (Config.Temperature).
var ErrTemperature = errors.New("model: the indirect band needs the sample temperature (K, > 0)")

// Config holds the settings of a model that are not fitted.
type Config struct {
	// Temperature is the sample temperature in K. The indirect band needs
	// it (for the phonon occupation); it must then be finite and > 0, and
	// is ignored by the other bands. Zero means not given.
	Temperature float64
}

// Bands lists the band-shape names accepted by New.
func Bands() []string { return append([]string(nil), bandNames[:]...) }

// Tails lists the tail names accepted by New.
func Tails() []string { return append([]string(nil), tailNames[:]...) }

// Baselines lists the baseline kinds accepted by WithBaseline.
func Baselines() []string { return []string{"const", "linear"} }

// New returns the model for a band shape and a tail (see Edge):
//
//	band: "direct", "direct-forbidden", "indirect", "exciton"
//	tail: "none", "urbach", "gauss", "theta", "joined"
//
// "direct"+"none" is Direct and "direct"+"urbach" is DirectUrbach; the
// other combinations are an Edge, or a TailedEdge when there is a tail.
// The excitonic band needs a broadening kernel ("urbach" or "gauss"): its
// bound lines are delta functions, which neither "none" nor "joined"
// broadens; "exciton"+"theta" is not available (it would need a
// three-variable table). Those return an error wrapping ErrCombination.
// The indirect band needs cfg.Temperature (an error wrapping
// ErrTemperature otherwise). Names are case-insensitive.
func New(band, tail string, cfg Config) (Model, error) {
	b, ok := indexOf(bandNames[:], band)
	if !ok {
		return nil, fmt.Errorf("%w: band %q (known: %s)", ErrUnknownModel, band, strings.Join(bandNames[:], ", "))
	}
	t, ok := indexOf(tailNames[:], tail)
	if !ok {
		return nil, fmt.Errorf("%w: tail %q (known: %s)", ErrUnknownModel, tail, strings.Join(tailNames[:], ", "))
	}
	m := Edge{band: bandKind(b), tail: tailKind(t)}
	switch {
	case m.band == bandDirect && m.tail == tailNone:
		return Direct{}, nil
	case m.band == bandDirect && m.tail == tailUrbach:
		return DirectUrbach{}, nil
	case m.band == bandExciton && (m.tail == tailNone || m.tail == tailJoined):
		return nil, fmt.Errorf("%w: %s+%s: the bound exciton lines need a broadening kernel (urbach or gauss)", ErrCombination, bandNames[b], tailNames[t])
	case m.band == bandExciton && m.tail == tailTheta:
		return nil, fmt.Errorf("%w: %s+%s is not available (use urbach or gauss)", ErrCombination, bandNames[b], tailNames[t])
	case m.band == bandIndirect:
		if T := cfg.Temperature; !(T > 0) || math.IsInf(T, 1) {
			return nil, fmt.Errorf("%w: got %v", ErrTemperature, T)
		}
		m.kT = Boltzmann * cfg.Temperature
	}
	if m.tail == tailNone {
		return m, nil
	}
	return TailedEdge{m}, nil
}

func indexOf(list []string, s string) (int, bool) {
	s = strings.ToLower(strings.TrimSpace(s))
	for i, v := range list {
		if v == s {
			return i, true
		}
	}
	return 0, false
}

// Lookup returns the model with the given name, "band", "band+tail" or
// either followed by "+const" or "+linear" (WithBaseline), with no
// Config: it fails for the indirect band, which needs a temperature (use
// LookupConfig).
func Lookup(name string) (Model, error) { return LookupConfig(name, Config{}) }

// LookupConfig is Lookup with the settings cfg.
func LookupConfig(name string, cfg Config) (Model, error) {
	band, tail, base, err := ParseName(name)
	if err != nil {
		return nil, err
	}
	m, err := New(band, tail, cfg)
	if err != nil || base == "" {
		return m, err
	}
	return WithBaseline(m, base)
}

// ParseName splits a model name "band[+tail][+baseline]" into its parts;
// tail is "none" and baseline "" when absent. It checks the names, not
// whether they combine.
func ParseName(name string) (band, tail, baseline string, err error) {
	parts := strings.Split(strings.ToLower(strings.TrimSpace(name)), "+")
	bad := func() (string, string, string, error) {
		return "", "", "", fmt.Errorf("%w %q (known: %s)", ErrUnknownModel, name, strings.Join(Names(), ", "))
	}
	if len(parts) > 3 {
		return bad()
	}
	if _, ok := indexOf(bandNames[:], parts[0]); !ok {
		return bad()
	}
	band, tail = parts[0], "none"
	rest := parts[1:]
	if len(rest) > 0 {
		if _, ok := indexOf(tailNames[:], rest[0]); ok {
			tail, rest = rest[0], rest[1:]
		}
	}
	if len(rest) > 0 {
		if _, ok := indexOf(Baselines(), rest[0]); !ok || len(rest) > 1 {
			return bad()
		}
		baseline = rest[0]
	}
	return band, tail, baseline, nil
}

// Names lists, sorted, the band+tail names that New accepts ("direct",
// "direct+urbach", …), without baseline suffixes.
func Names() []string {
	var n []string
	for _, b := range bandNames {
		for _, t := range tailNames {
			if _, err := New(b, t, Config{Temperature: 300}); err != nil {
				continue
			}
			if t == "none" {
				n = append(n, b)
			} else {
				n = append(n, b+"+"+t)
			}
		}
	}
	sort.Strings(n)
	return n
}
