package builtin

import (
	"errors"
	"regexp"

	"semiflow/lang/value"
	"semiflow/numerics/memguard"
)

// classify gives every builtin's error its class by what caused it, the one
// place a sentinel of the numerics decides the class whatever words the
// builtin chose: a refusal of the memory guard anywhere in the error's
// chain (value.Error keeps its cause) is ClassMemory. Other errors pass
// unchanged.
//
// Every message also loses the names of Semiflow's numerical packages
// that their errors carry as prefixes ("spectra: ", "solve: "): a reader
// sees what failed in the trade's words, not where in the code.
func classify(name string, err error) error {
	if err == nil {
		return nil
	}
	var ve *value.Error
	if errors.As(err, &ve) && ve == err {
		if m := plainMessage(ve.Msg); m != ve.Msg {
			err = &value.Error{Name: ve.Name, Msg: m, Cause: ve.Cause}
		}
	}
	if !errors.Is(err, memguard.ErrTooLarge) {
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

// packagePrefix matches a numerical package's name written as the prefix of
// an error message, at the start, after ": " or after "(".
var packagePrefix = regexp.MustCompile(`(^|: |\()(expo|spectra|linop|solve|mmio|memguard|abandon|steady|pencil|gemm|roundoff|grid|magnus): `)

// plainMessage removes the package prefixes from msg, and a repeated
// "numerical failure: " that a prefix left behind.
func plainMessage(msg string) string {
	for {
		m := packagePrefix.ReplaceAllString(msg, "$1")
		if m == msg {
			return msg
		}
		msg = m
	}
}
