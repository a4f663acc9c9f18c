"""jupyter_kernel_test conformance suite for the Semiflow kernel.

Run by run_jupyter_tests.sh with Debian's /usr/bin/python3, after the
kernelspec "semiflow" has been installed where JUPYTER_PATH points.
Every sample attribute of jupyter_kernel_test.KernelTests is set, so no
test is skipped for lack of a sample."""
import unittest

import jupyter_kernel_test

import sfrunner


class SemiflowKernelTests(jupyter_kernel_test.KernelTests):
    kernel_name = "semiflow"
    language_name = "semiflow"
    file_extension = ".sf"

    code_hello_world = 'print("hello, world")'
    code_stderr = 'warn("something is off")'

    completion_samples = [
        {"text": "pri", "matches": {"print"}},
        {"text": "x = pag", "matches": {"page"}},
    ]
    complete_code_samples = ["1 + 2", "x = 3", 'print("done")']
    incomplete_code_samples = ["f(", "x = [1, 2", '"abc']
    invalid_code_samples = [")", "1 +* 2", "@"]

    code_page_something = 'page("print")'
    code_generate_error = "no_such_name"
    code_execute_result = [
        {"code": "1 + 2", "result": "3"},
        {"code": "2 * 3", "result": "6"},
    ]
    code_display_data = [{"code": "show(1 + 2)", "mime": "text/plain"}]
    code_history_pattern = "1 + *"
    supported_history_operations = ("tail", "range", "search")
    code_inspect_sample = "print"
    code_clear_output = "clear()"


if __name__ == "__main__":
    sfrunner.main(__name__)
