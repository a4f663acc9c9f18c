"""Shared runner for the Jupyter suites: runs a unittest module's tests,
treats a skipped test as a failure (every sample is provided, so nothing may
be skipped) and prints one line 'SUITE-RESULT passed=N failed=M'."""
import sys
import unittest


def main(module_name):
    suite = unittest.defaultTestLoader.loadTestsFromModule(sys.modules[module_name])
    result = unittest.TextTestRunner(verbosity=2, stream=sys.stdout).run(suite)
    failed = len(result.failures) + len(result.errors) + len(result.skipped) + len(result.unexpectedSuccesses)
    for test, reason in result.skipped:
        print(f"SKIPPED (counted as a failure): {test}: {reason}")
    passed = result.testsRun - failed
    print(f"SUITE-RESULT passed={passed} failed={failed}")
    sys.exit(1 if failed else 0)
