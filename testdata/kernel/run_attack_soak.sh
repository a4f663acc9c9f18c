#!/usr/bin/env bash
# Builds semiflow and runs the attack-and-soak suite (attack_soak.py) against
# the real binary with Debian's python3 (jupyter_client, pyzmq). About a
# minute; the last line is 'N passed, N failed'. Without the Python modules
# it skips, except under CI=true, where that is a failure.
set -u
here="$(cd "$(dirname "$0")" && pwd)"
root="$(cd "$here/../.." && pwd)"
py="${SEMIFLOW_PYTHON:-/usr/bin/python3}" # Debian's, which has the Jupyter modules

. "$here/jupyter_env.sh"
jupyter_require_modules run_attack_soak "python3-jupyter-client python3-zmq" jupyter_client zmq
semiflow_kernel_setup quiet
timeout 600 "$py" "$here/attack_soak.py" "$tmp/semiflow"
