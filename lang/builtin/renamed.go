package builtin

// Renamed maps a builtin's former name to its present one. The former
// names collided with a meaning the trade gives the word (the span of
// vectors, n choose k, a random sample, the generator Q of a Markov chain)
// or said too little (coef, tensor). A former name still works for one
// release: it is the same builtin, it is not listed by help, completion or
// REFERENCE.md, and a cell that uses it warns once per name on standard
// error with the present name. Remove the entries in the release after.
var Renamed = map[string]string{
	"span":      "equispaced", // n equally spaced points
	"choose":    "when",       // when(cond, a, b): the conditional choice
	"sample":    "tabulate",   // a function tabulated on a grid
	"coef":      "multiplier", // the multiplication operator u ↦ f·u
	"tensor":    "tensorgrid", // the tensor-product grid of two 1-D grids
	"generator": "wellposed",  // is the problem u' = Au well posed: ‖e^{tA}‖ ≤ M e^{ωt}
}
