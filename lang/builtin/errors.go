package builtin

import (
	"errors"

	"semiflow/lang/value"
	"semiflow/numerics/memguard"
)

// classify gives every builtin's error its class by what caused it, the one
// place a sentinel of the numerics decides the class whatever words the
// builtin chose: a refusal of the memory guard anywhere in the error's
// chain (value.Error keeps its cause) is ClassMemory. Other errors pass
// unchanged.
func classify(name string, err error) error {
	if err == nil || !errors.Is(err, memguard.ErrTooLarge) {
		return err
	}
	var e *value.Error
	if errors.As(err, &e) {
		if e.Name == value.ClassMemory {
			return err
		}
		return &value.Error{Name: value.ClassMemory, Msg: e.Msg, Cause: e.Cause}
	}
	return value.Errorf(value.ClassMemory, "%s: %v", name, err)
}
