#!/usr/bin/env bash
# Builds semiflow, installs its kernelspec into a temporary Jupyter data
# directory, and runs the Jupyter suites with Debian's python3:
#   test_semiflow_kernel.py  jupyter_kernel_test conformance
#   test_client_session.py   jupyter_client execute/interrupt/restart/shutdown, error
#                            reports and aborted replies, nbclient (errors as error outputs)
#   test_console.py          jupyter console fed a script on stdin
# Exits non-zero on any failure. Without the Python modules it skips, except
# under CI=true, where that is a failure. The last line is 'N passed, N failed'.
set -u
here="$(cd "$(dirname "$0")" && pwd)"
root="$(cd "$here/../.." && pwd)"
py="${SEMIFLOW_PYTHON:-/usr/bin/python3}" # Debian's, which has the Jupyter modules

. "$here/jupyter_env.sh"
jupyter_require_modules run_jupyter_tests \
	"python3-jupyter-kernel-test python3-jupyter-client jupyter-console python3-nbclient" \
	jupyter_kernel_test jupyter_client jupyter_console nbclient nbformat
semiflow_kernel_setup
"$py" -c 'from jupyter_client.kernelspec import KernelSpecManager as M; s = M().get_kernel_spec("semiflow"); assert s.language == "semiflow" and s.interrupt_mode == "message", s.to_dict()' \
	|| { echo "0 passed, 1 failed (kernelspec not found by jupyter_client)"; exit 1; }

passed=1 failed=0 # the kernelspec check above
for t in test_semiflow_kernel.py test_client_session.py test_console.py; do
	echo "=== $t"
	(cd "$here" && "$py" "$t") >"$tmp/out.txt" 2>&1
	rc=$?
	cat "$tmp/out.txt"
	line="$(grep '^SUITE-RESULT' "$tmp/out.txt" | tail -1)"
	if [ -z "$line" ]; then
		echo "run_jupyter_tests: $t did not report a result (exit $rc)"
		failed=$((failed + 1))
		continue
	fi
	p="${line#*passed=}"; p="${p%% *}"
	f="${line#*failed=}"
	passed=$((passed + p)); failed=$((failed + f))
	if [ "$rc" -ne 0 ] && [ "$f" -eq 0 ]; then failed=$((failed + 1)); fi
done
echo "$passed passed, $failed failed"
[ "$failed" -eq 0 ]
