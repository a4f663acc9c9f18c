package install

import (
	"encoding/json"
	"sort"
	"strings"
)

// Words are the names the notebook's syntax highlighting knows, taken from
// the language itself (the reserved words of lang/syntax and the builtin
// table), so the highlighting cannot drift from the language.
type Words struct {
	Keywords  []string // reserved words: and, or, not, by, where, with
	Builtins  []string // builtin functions
	Constants []string // builtin constants: pi, e, inf, nan, true, false
}

// KernelJS is the kernelspec's kernel.js for the classic notebook: a
// require.js module whose onload defines the CodeMirror mode "semiflow"
// (MIME text/x-semiflow) and applies it to the notebook's code cells. The
// kernel's language_info names that mode (codemirror_mode), and the
// notebook loads kernel.js from the kernelspec when the kernel starts.
//
// The mode's token classes: comments from # to the end of the line;
// strings in double quotes with backslash escapes; numbers, decimal with an
// optional exponent and an optional imaginary unit i (2, 0.5, 1e-3, 3i);
// reserved words; builtin constants; builtin functions when called (a name
// followed by "("); the name a statement defines (at the start of a line,
// before "=" or before a parameter list and "="); named arguments (name=
// inside brackets);
// operators (.. -> ↦ == != <= >= ⊕ and single characters).
func KernelJS(w Words) string {
	list := func(names []string) string {
		s := append([]string(nil), names...)
		sort.Strings(s)
		b, _ := json.Marshal(s)
		return string(b)
	}
	r := strings.NewReplacer(
		"@KEYWORDS@", list(w.Keywords),
		"@BUILTINS@", list(w.Builtins),
		"@CONSTANTS@", list(w.Constants),
	)
	return r.Replace(kernelJSTemplate)
}

const kernelJSTemplate = `// Semiflow's syntax highlighting for the classic Jupyter notebook.
// Written by "semiflow install" from the language's own word lists.
define(["codemirror/lib/codemirror", "base/js/namespace"], function (CodeMirror, Jupyter) {
  "use strict";

  var keywords = @KEYWORDS@;
  var builtins = @BUILTINS@;
  var constants = @CONSTANTS@;

  function set(names) {
    var s = Object.create(null);
    names.forEach(function (n) { s[n] = true; });
    return s;
  }

  function defineSemiflow() {
    if (CodeMirror.modes.hasOwnProperty("semiflow")) {
      return;
    }
    var isKeyword = set(keywords), isBuiltin = set(builtins), isConstant = set(constants);
    var number = /^(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?i?/;
    var name = /^[A-Za-z_\u00C0-\u024F\u0370-\u03FF][A-Za-z0-9_\u00C0-\u024F\u0370-\u03FF']*/;
    var longOp = /^(?:\.\.|->|==|!=|<=|>=)/;

    CodeMirror.defineMode("semiflow", function () {
      return {
        startState: function () { return {depth: 0, lineStart: true}; },
        token: function (stream, state) {
          if (stream.sol()) {
            state.lineStart = state.depth === 0;
          }
          if (stream.eatSpace()) {
            return null;
          }
          var atStart = state.lineStart;
          state.lineStart = false;
          var ch = stream.peek();
          if (ch === "#") {
            stream.skipToEnd();
            return "comment";
          }
          if (ch === "\"") {
            stream.next();
            var escaped = false, c;
            while ((c = stream.next()) != null) {
              if (c === "\"" && !escaped) {
                break;
              }
              escaped = !escaped && c === "\\";
            }
            return "string";
          }
          if (stream.match(number)) {
            return "number";
          }
          var m = stream.match(name);
          if (m) {
            var word = m[0];
            if (isKeyword[word]) {
              return "keyword";
            }
            if (atStart && stream.match(/^\s*(?:\([^()]*(?:\([^()]*\)[^()]*)*\)\s*)?=(?!=)/, false)) {
              return "def";
            }
            if (state.depth > 0 && stream.match(/^\s*=(?!=)/, false)) {
              return "attribute";
            }
            if (isConstant[word]) {
              return "atom";
            }
            if (isBuiltin[word] && stream.match(/^\s*\(/, false)) {
              return "builtin";
            }
            return "variable";
          }
          if (ch === "(" || ch === "[" || ch === "{") {
            stream.next();
            state.depth++;
            return "bracket";
          }
          if (ch === ")" || ch === "]" || ch === "}") {
            stream.next();
            state.depth = Math.max(0, state.depth - 1);
            return "bracket";
          }
          if (ch === ";") {
            stream.next();
            state.lineStart = state.depth === 0;
            return null;
          }
          if (stream.match(longOp)) {
            return "operator";
          }
          stream.next();
          return /[-+*\/^%=<>&|!\u21A6\u2295\u00B7]/.test(ch) ? "operator" : null;
        },
        lineComment: "#",
        closeBrackets: "()[]{}\"\""
      };
    });
    CodeMirror.defineMIME("text/x-semiflow", "semiflow");
  }

  function onload() {
    defineSemiflow();
    var nb = Jupyter.notebook;
    if (nb && nb.set_codemirror_mode) {
      // The notebook may have asked for the mode before it existed and
      // fallen back to none; ask again now that it is defined.
      nb.codemirror_mode = null;
      nb.set_codemirror_mode("semiflow");
    }
  }

  return {onload: onload, defineSemiflow: defineSemiflow};
});
`
