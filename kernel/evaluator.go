package kernel

import "context"

// Evaluator is everything the kernel needs from the language. The kernel
// knows nothing else of it; main.go adapts lang/run.Session to this
// interface. All positions are offsets in Unicode code points (Jupyter
// protocol 5.2+ cursor_pos semantics).
type Evaluator interface {
	// Execute runs one cell. It returns the cell's value as a MIME bundle
	// (nil data when the cell has no value to show) or an error. It must
	// return promptly (within a fraction of a second) after ctx is cancelled.
	Execute(ctx context.Context, code string, out Output) (data, metadata map[string]any, err error)
	// Complete returns candidate completions for the text before cursor and
	// the code-point range [start, end) that they replace.
	Complete(code string, cursor int) (matches []string, start, end int)
	// Inspect returns documentation or a value description for the name at
	// cursor; found is false when there is nothing to say.
	Inspect(code string, cursor, detail int) (data map[string]any, found bool)
	// IsComplete reports "complete", "incomplete" (with a suggested indent)
	// or "invalid".
	IsComplete(code string) (status, indent string)
}

// Output receives what a cell emits while it runs.
type Output interface {
	// Stream writes text to "stdout" or "stderr".
	Stream(name, text string)
	// Display shows a MIME bundle. A non-empty displayID names the display
	// so that later calls with update=true replace it (update_display_data,
	// always with the full bundle).
	Display(data, metadata map[string]any, displayID string, update bool)
	// Clear clears the cell's output area; wait defers it to the next output.
	Clear(wait bool)
	// Page sends a MIME bundle to the notebook's pager (an execute_reply
	// payload).
	Page(data map[string]any)
}

// EvalError is implemented by evaluation errors that know their Jupyter
// presentation. Errors that do not implement it are shown with ename
// "failure" and their Error() text.
type EvalError interface {
	error
	// ErrorName is the ename: a short class such as "bad syntax".
	ErrorName() string
	// Traceback is the lines shown to the user (position and message, cell
	// line, carets, call sites); they may carry ANSI SGR colour sequences,
	// which front ends render in an error output.
	Traceback() []string
}
