# Shared set-up of the shell suites that talk to Jupyter, sourced (not run) by
# testdata/kernel/run_jupyter_tests.sh, testdata/notebooks/check_notebooks.sh
# and testdata/browser/run_browser_test.sh. The caller sets py (the Python
# interpreter with the Jupyter modules) and root (the repository) first.

# jupyter_require_modules WHO "PACKAGES" MODULE...: returns if $py imports
# every MODULE. Otherwise it names the missing set and the Debian PACKAGES
# and exits: with 1 and '0 passed, 1 failed' under CI=true, else with 0 as
# a skip.
jupyter_require_modules() {
	local who="$1" packages="$2"
	shift 2
	local mods="$*"
	if "$py" -c "import ${mods// /, }" 2>/dev/null; then
		return 0
	fi
	local IFS=/
	echo "$who: $py lacks $*"
	echo "  (Debian: apt-get install $packages)"
	if [ "${CI:-}" = "true" ]; then
		echo "0 passed, 1 failed"
		exit 1
	fi
	echo "0 passed, 0 failed (skipped: modules missing)"
	exit 0
}

# jupyter_private_dirs DIR: points Jupyter's data, path, config and runtime
# directories (and IPython's) below DIR, so that a kernelspec installed with
# `semiflow install --user` is found there and nowhere else is touched.
jupyter_private_dirs() {
	export JUPYTER_DATA_DIR="$1/data" JUPYTER_PATH="$1/data" JUPYTER_CONFIG_DIR="$1/config" \
		JUPYTER_RUNTIME_DIR="$1/runtime" IPYTHONDIR="$1/ipython" JUPYTER_PLATFORM_DIRS=1 PYTHONDONTWRITEBYTECODE=1
}

# semiflow_kernel_setup [quiet]: makes the temporary directory $tmp (removed
# on exit), builds semiflow into $tmp/semiflow, and installs its kernelspec
# into private Jupyter directories below $tmp; with "quiet" the install's own
# output is dropped. On failure it prints '0 passed, 1 failed (build)' or
# '(install)' and exits 1.
semiflow_kernel_setup() {
	tmp="$(mktemp -d)"
	trap 'rm -rf "$tmp"' EXIT
	(cd "$root" && go build -o "$tmp/semiflow" .) || { echo "0 passed, 1 failed (build)"; exit 1; }
	jupyter_private_dirs "$tmp"
	if [ "${1:-}" = quiet ]; then
		"$tmp/semiflow" install --user >/dev/null || { echo "0 passed, 1 failed (install)"; exit 1; }
	else
		"$tmp/semiflow" install --user || { echo "0 passed, 1 failed (install)"; exit 1; }
	fi
}
