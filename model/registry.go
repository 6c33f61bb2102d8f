package model

import (
	"errors"
	"fmt"
	"sort"
	"strings"
)

// ErrUnknownModel is returned by Lookup for a name it does not know.
var ErrUnknownModel = errors.New("model: unknown model")

// registry maps command-line names to model constructors.
var registry = map[string]func() Model{
	Direct{}.Name():       func() Model { return Direct{} },
	DirectUrbach{}.Name(): func() Model { return DirectUrbach{} },
}

// Lookup returns the model with the given name.
func Lookup(name string) (Model, error) {
	mk, ok := registry[strings.ToLower(strings.TrimSpace(name))]
	if !ok {
		return nil, fmt.Errorf("%w %q (known: %s)", ErrUnknownModel, name, strings.Join(Names(), ", "))
	}
	return mk(), nil
}

// Names lists the known model names in sorted order.
func Names() []string {
	n := make([]string, 0, len(registry))
	for k := range registry {
		n = append(n, k)
	}
	sort.Strings(n)
	return n
}
