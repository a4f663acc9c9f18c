// Tokenises standard input with the semiflow CodeMirror mode of a kernel.js
// in node, without a browser (CodeMirror's runmode for node).
// usage: node tokens.js RUNMODE_NODE_JS KERNEL_JS < source
const fs = require("fs");
const CodeMirror = require(process.argv[2]);
let mod;
global.define = function (deps, f) { mod = f(CodeMirror, {}); };
eval(fs.readFileSync(process.argv[3], "utf8"));
mod.defineSemiflow();
const src = fs.readFileSync(0, "utf8");
const out = [];
CodeMirror.runMode(src, "semiflow", function (text, style) {
  if (text.trim() !== "") out.push([text, style || null]);
});
console.log(JSON.stringify(out));
