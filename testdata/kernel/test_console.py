"""Feeds a short script to `jupyter console --kernel semiflow
--simple-prompt` on standard input and checks what it prints."""
import os
import subprocess
import sys
import unittest

import sfrunner

SCRIPT = 'x = 6\nx * 7\nprint("from the console")\nno_such_name\n'


class Console(unittest.TestCase):
    def test_console_script(self):
        p = subprocess.run(
            [sys.executable, "-m", "jupyter_console", "--kernel", "semiflow", "--simple-prompt"],
            input=SCRIPT, capture_output=True, text=True, timeout=60,
            env=dict(os.environ, TERM="dumb"),
        )
        out = p.stdout
        self.assertEqual(p.returncode, 0, p.stderr)
        self.assertIn("42", out)
        self.assertIn("from the console", out)
        self.assertIn("unknown name no_such_name", out + p.stderr)
        self.assertIn("Out[2]: 42", out)


if __name__ == "__main__":
    sfrunner.main(__name__)
