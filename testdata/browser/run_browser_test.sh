#!/usr/bin/env bash
# Browser test of the Semiflow kernel in Debian's classic Jupyter notebook.
#
# Builds semiflow, installs its kernelspec into a temporary Jupyter data
# directory, copies an example notebook with its outputs cleared into a
# temporary notebook directory, starts the classic notebook server on
# 127.0.0.1 (random free port, a token, no browser) and runs notebook_check.js
# under headless Chromium (playwright-core driving /usr/bin/chromium; no browser
# is ever downloaded). The script runs every cell through the Cell menu and
# checks the semiflow syntax highlighting of the code cells (kernel.js), inline
# SVG figures, HTML tables, no error output, unclipped SVG
# text, SVG ids unique on the page and outputs that survive saving; it writes
# a full-page screenshot of
# each notebook to $ARTIFACT_DIR (default testdata/browser/artifacts/).
#
# Before that it opens every example notebook as committed (outputs kept, not
# trusted, not run) plus testdata/browser/error_outputs.ipynb, and checks that
# every figure shows, no hidden figure text leaks, error outputs render as
# errors, and the layout matches testdata/browser/layout/NAME.json.
#
# Environment:
#   CI=true            missing chromium, node, npm or the notebook server is a failure, not a skip
#   NOTEBOOK=paths     the notebooks to run, separated by spaces, or "all" for every
#                      notebooks/*.ipynb (default: notebooks/shear_transient_growth.ipynb,
#                      else the first notebooks/*.ipynb, else testdata/browser/smoke.ipynb;
#                      "none" to run none)
#   COMMITTED=paths    the notebooks to open as committed (default: every notebooks/*.ipynb and
#                      testdata/browser/error_outputs.ipynb; "none" for none)
#   UPDATE_LAYOUT=1    write the layout references instead of comparing with them
#   SEMIFLOW_BIN=path  use this binary instead of building one
#   SEMIFLOW_PYTHON    the interpreter that has the notebook server (default /usr/bin/python3)
#   ARTIFACT_DIR       where the screenshot goes
#   BROWSER_TIMEOUT    overall limit of the browser part in seconds (default 240)
#
# Debian packages: chromium jupyter-notebook python3-nbformat nodejs npm.
# The last line is 'N passed, N failed'; the exit status is non-zero on any failure.
set -u
here="$(cd "$(dirname "$0")" && pwd)"
root="$(cd "$here/../.." && pwd)"
py="${SEMIFLOW_PYTHON:-/usr/bin/python3}"
chromium=/usr/bin/chromium
artifacts="${ARTIFACT_DIR:-$here/artifacts}"
limit="${BROWSER_TIMEOUT:-240}"
start=$(date +%s)

skip_or_fail() {
	echo "run_browser_test: $1"
	echo "  (Debian: apt-get install -y chromium jupyter-notebook python3-nbformat nodejs npm)"
	if [ "${CI:-}" = "true" ]; then
		echo "0 passed, 1 failed"
		exit 1
	fi
	echo "run_browser_test: skipped"
	echo "0 passed, 0 failed, 1 skipped"
	exit 0
}

[ -x "$chromium" ] || skip_or_fail "$chromium not found"
command -v node >/dev/null 2>&1 || skip_or_fail "node not found"
command -v npm >/dev/null 2>&1 || skip_or_fail "npm not found"
"$py" -c 'import notebook, nbformat; assert int(notebook.__version__.split(".")[0]) < 7' 2>/dev/null \
	|| skip_or_fail "$py lacks the classic notebook server (notebook < 7) or nbformat"

fail() {
	echo "run_browser_test: $1"
	echo "0 passed, 1 failed"
	exit 1
}

# npm dependencies from the committed lock file; reinstalled only when the
# installed playwright-core is not the pinned one.
want="$(node -e 'console.log(require(process.argv[1]).dependencies["playwright-core"])' "$here/package.json")"
have="$(cd "$here" && node -e 'console.log(require("playwright-core/package.json").version)' 2>/dev/null)"
if [ "$have" != "$want" ]; then
	(cd "$here" && npm ci --no-audit --no-fund --loglevel=error) || fail "npm ci failed"
fi

tmp="$(mktemp -d)"
server_pid=""
cleanup() {
	if [ -n "$server_pid" ]; then
		kill "$server_pid" 2>/dev/null
		for _ in 1 2 3 4 5 6 7 8 9 10; do
			kill -0 "$server_pid" 2>/dev/null || break
			sleep 0.5
		done
		kill -9 "$server_pid" 2>/dev/null
		wait "$server_pid" 2>/dev/null
	fi
	# A browser left behind by a killed node process: its processes are the
	# ones whose command line names this run's own profile directory.
	for pid in $(pgrep -f -- "--user-data-dir=$tmp/profile" 2>/dev/null); do
		kill -9 "$pid" 2>/dev/null
	done
	rm -rf "$tmp"
}
trap cleanup EXIT
trap 'exit 130' INT TERM

if [ -n "${SEMIFLOW_BIN:-}" ]; then
	cp "$SEMIFLOW_BIN" "$tmp/semiflow" || fail "cannot copy $SEMIFLOW_BIN"
else
	(cd "$root" && go build -o "$tmp/semiflow" .) || fail "go build failed"
fi

. "$root/testdata/kernel/jupyter_env.sh"
jupyter_private_dirs "$tmp"
"$tmp/semiflow" install --user >/dev/null || fail "semiflow install failed"

case "${NOTEBOOK:-}" in
"")
	if [ -f "$root/notebooks/shear_transient_growth.ipynb" ]; then
		notebooks="$root/notebooks/shear_transient_growth.ipynb"
	else
		notebooks="$(ls "$root"/notebooks/*.ipynb 2>/dev/null | head -1)"
		[ -n "$notebooks" ] || notebooks="$here/smoke.ipynb"
	fi
	;;
none) notebooks="" ;;
all)
	notebooks="$(ls "$root"/notebooks/*.ipynb 2>/dev/null)"
	[ -n "$notebooks" ] || fail "no notebooks/*.ipynb"
	;;
*) notebooks="$NOTEBOOK" ;;
esac
mkdir -p "$tmp/nb"
names=""
for nb in $notebooks; do
	[ -f "$nb" ] || fail "notebook $nb not found"
	name="$(basename "$nb")"
	# Outputs and execution counts cleared, so whatever the page shows was computed now.
	"$py" - "$nb" "$tmp/nb/$name" <<'EOF' || fail "cannot clear the outputs of $nb"
import sys, warnings, nbformat
warnings.simplefilter("ignore")  # missing cell ids in older notebooks
nb = nbformat.read(sys.argv[1], as_version=4)
for cell in nb.cells:
    if cell.cell_type == "code":
        cell.outputs = []
        cell.execution_count = None
nbformat.write(nb, sys.argv[2])
EOF
	echo "run_browser_test: notebook ${nb#"$root"/}"
	names="${names:+$names,}$name"
done

# The notebooks as committed: copied unchanged (a fresh Jupyter data
# directory has no signatures, so they open untrusted).
case "${COMMITTED:-}" in
"") committed_paths="$(ls "$root"/notebooks/*.ipynb 2>/dev/null) $here/error_outputs.ipynb" ;;
none) committed_paths="" ;;
*) committed_paths="$COMMITTED" ;;
esac
mkdir -p "$tmp/nb/committed"
committed=""
for nb in $committed_paths; do
	[ -f "$nb" ] || fail "notebook $nb not found"
	cp "$nb" "$tmp/nb/committed/" || fail "cannot copy $nb"
	committed="${committed:+$committed,}committed/$(basename "$nb")"
done

port="$("$py" -c 'import socket; s = socket.socket(); s.bind(("127.0.0.1", 0)); print(s.getsockname()[1]); s.close()')"
token="$("$py" -c 'import secrets; print(secrets.token_hex(24))')"
"$py" -m notebook --no-browser --ip=127.0.0.1 --port="$port" --NotebookApp.port_retries=0 \
	--NotebookApp.token="$token" --NotebookApp.password= --notebook-dir="$tmp/nb" --allow-root \
	--NotebookApp.disable_check_xsrf=False >"$tmp/server.log" 2>&1 &
server_pid=$!

up=""
for _ in $(seq 1 60); do
	if ! kill -0 "$server_pid" 2>/dev/null; then
		cat "$tmp/server.log"
		server_pid=""
		fail "the notebook server exited at start"
	fi
	if "$py" -c 'import sys, urllib.request; urllib.request.urlopen("http://127.0.0.1:%s/api/status?token=%s" % (sys.argv[1], sys.argv[2]), timeout=2)' "$port" "$token" 2>/dev/null; then
		up=1
		break
	fi
	sleep 0.5
done
[ -n "$up" ] || { cat "$tmp/server.log"; fail "the notebook server did not answer on 127.0.0.1:$port within 30 s"; }

mkdir -p "$artifacts"
(cd "$here" && timeout -k 5 "$limit" node notebook_check.js \
	--url "http://127.0.0.1:$port" --token "$token" ${names:+--notebooks "$names"} \
	--chromium "$chromium" --profile "$tmp/profile" --artifacts "$artifacts" \
	${committed:+--committed "$committed" --layout "$here/layout"} \
	${UPDATE_LAYOUT:+--update-layout "$UPDATE_LAYOUT"} \
	--timeout "$((limit - 10))") >"$tmp/check.log" 2>&1
rc=$?
cat "$tmp/check.log"
if [ "$rc" -eq 124 ] || [ "$rc" -eq 137 ]; then
	echo "run_browser_test: the browser check was stopped after ${limit} s"
fi
if [ "$rc" -ne 0 ]; then
	echo "--- notebook server log (last 40 lines)"
	tail -40 "$tmp/server.log"
fi
summary="$(grep -E '^checks: [0-9]+ passed, [0-9]+ failed$' "$tmp/check.log" | tail -1)"
summary="${summary#checks: }"
echo "run_browser_test: $(($(date +%s) - start)) s in all"
if [ -z "$summary" ]; then
	summary="0 passed, 1 failed"
elif [ "$rc" -ne 0 ] && [ "${summary##*, }" = "0 failed" ]; then
	summary="${summary%%, *}, 1 failed"
fi
echo "$summary"
[ "$rc" -eq 0 ] && [ "${summary##*, }" = "0 failed" ]
