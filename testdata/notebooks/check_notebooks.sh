#!/usr/bin/env bash
# Checks the example notebooks in notebooks/ outside Go, with Debian's python3:
#   1. `semiflow run` writes each notebook; nbformat.validate accepts it;
#   2. nbclient executes each notebook against the installed kernelspec and
#      the saved result validates and has no error outputs;
#   3. `jupyter nbconvert --to html` renders it, and the HTML holds the
#      figures (as PNG images; each output also keeps its SVG) and the HTML
#      tables.
# Without the Python modules it skips, except under CI=true, where that is a
# failure. The last line is 'N passed, N failed'.
set -u
here="$(cd "$(dirname "$0")" && pwd)"
root="$(cd "$here/../.." && pwd)"
py="${SEMIFLOW_PYTHON:-/usr/bin/python3}" # Debian's, which has the Jupyter modules

. "$root/testdata/kernel/jupyter_env.sh"
jupyter_require_modules check_notebooks \
	"python3-nbformat python3-nbclient python3-nbconvert python3-jupyter-client" \
	nbformat nbclient nbconvert jupyter_client
semiflow_kernel_setup quiet

passed=0 failed=0
pass() { passed=$((passed + 1)); echo "ok   $1"; }
fail() { failed=$((failed + 1)); echo "FAIL $1"; }

shopt -s nullglob
nbs=("$root"/notebooks/*.ipynb)
if [ "${#nbs[@]}" -eq 0 ]; then
	fail "no notebooks in notebooks/"
fi
for nb in "${nbs[@]}"; do
	name="$(basename "$nb" .ipynb)"
	out="$tmp/$name.run.ipynb"

	# 1. semiflow run, then the nbformat schema.
	if "$tmp/semiflow" run -o "$out" "$nb" 2>"$tmp/run.err" &&
		"$py" -c 'import sys, nbformat; nbformat.validate(nbformat.read(sys.argv[1], as_version=4))' "$out" 2>"$tmp/val.err"; then
		pass "$name: semiflow run writes a valid notebook"
	else
		cat "$tmp/run.err" "$tmp/val.err" 2>/dev/null
		fail "$name: semiflow run writes a valid notebook"
	fi

	# 2. nbclient against the kernelspec, saved and read back.
	exe="$tmp/$name.nbclient.ipynb"
	if "$py" - "$nb" "$exe" >"$tmp/nbc.out" 2>&1 <<'PY'
import sys
import nbformat
from nbclient import NotebookClient

nb = nbformat.read(sys.argv[1], as_version=4)
NotebookClient(nb, timeout=120, kernel_name="semiflow").execute()
nbformat.write(nb, sys.argv[2])
nb = nbformat.read(sys.argv[2], as_version=4)
nbformat.validate(nb)
errors = [o for c in nb.cells if c.cell_type == "code" for o in c.outputs if o.output_type == "error"]
assert not errors, errors
empty = [i for i, c in enumerate(nb.cells) if c.cell_type == "code" and c.source.strip() and not c.outputs]
assert not empty, "code cells without outputs: %s" % empty
PY
	then
		pass "$name: nbclient executes it with the semiflow kernel"
	else
		cat "$tmp/nbc.out"
		fail "$name: nbclient executes it with the semiflow kernel"
		continue
	fi

	# 3. nbconvert to HTML: the figures and tables survive.
	if (cd "$tmp" && "$py" -m nbconvert --to html --output "$name" "$exe") >"$tmp/conv.out" 2>&1 &&
		"$py" - "$tmp/$name.html" "$exe" <<'PY'
import sys
import nbformat

html = open(sys.argv[1], encoding="utf-8").read()
nb = nbformat.read(sys.argv[2], as_version=4)
figs = [o["data"] for c in nb.cells if c.cell_type == "code" for o in c.outputs if "image/svg+xml" in o.get("data", {})]
assert figs, "the executed notebook has no SVG figure"
assert all("image/png" in d for d in figs), "a figure without its PNG form"
# A result shows its figure in its HTML as a PNG <img> (inline SVG would be
# stripped in an untrusted notebook, its text spilling into the page).
imgs = html.count('<img src="data:image/png;base64,')
assert imgs >= len(figs), "HTML has %d PNG figures, notebook %d figures" % (imgs, len(figs))
assert "Figure with" not in html, "a figure's hidden description shows as text"
assert "<table" in html, "HTML has no table"
assert "Caution" in html, "HTML lacks the Markdown cells"
PY
	then
		pass "$name: nbconvert HTML holds the figures and tables"
	else
		cat "$tmp/conv.out"
		fail "$name: nbconvert HTML holds the figures and tables"
	fi
done
echo "$passed passed, $failed failed"
[ "$failed" -eq 0 ]
