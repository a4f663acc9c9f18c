// Package objects holds the language values built on the numerics: grids
// (1-D uniform intervals and Chebyshev points, 2-D tensor products),
// operators (a linop.Operator with its grid and a label) and the results of
// propagation. Analysis results (files named stab_*) live here too.
//
// Values are immutable, as everywhere in the language: operator algebra
// builds new operators that share the operands' storage.
package objects
