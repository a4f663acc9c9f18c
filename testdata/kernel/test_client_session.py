"""Drives the Semiflow kernel with jupyter_client as a notebook server
would: execute, interrupt (message and SIGINT), restart, shutdown, and an
nbclient run of a small notebook whose outputs must survive saving."""
import os
import signal
import time
import unittest

import nbformat
from jupyter_client.manager import start_new_kernel
from nbclient import NotebookClient

import sfrunner

TIMEOUT = 20


def run(kc, code, timeout=TIMEOUT):
    out = []
    reply = kc.execute_interactive(code, output_hook=out.append, timeout=timeout)
    return reply["content"], out


class ClientSession(unittest.TestCase):
    def setUp(self):
        self.km, self.kc = start_new_kernel(kernel_name="semiflow", startup_timeout=TIMEOUT)

    def tearDown(self):
        self.kc.stop_channels()
        if self.km.is_alive():
            self.km.shutdown_kernel(now=True)

    def test_execute_values_and_state(self):
        r, out = run(self.kc, "a = 20")
        self.assertEqual(r["status"], "ok")
        r, out = run(self.kc, "a + 22")
        results = [m for m in out if m["msg_type"] == "execute_result"]
        self.assertEqual(results[0]["content"]["data"]["text/plain"], "42")
        self.assertEqual(results[0]["content"]["execution_count"], r["execution_count"])

    def test_error_reply(self):
        r, out = run(self.kc, "no_such_name")
        self.assertEqual(r["status"], "error")
        self.assertEqual(r["ename"], "unknown name")
        self.assertIsInstance(r["execution_count"], int)  # the cell ran
        errs = [m["content"] for m in out if m["msg_type"] == "error"]
        self.assertEqual(len(errs), 1)
        tb = errs[0]["traceback"]
        # Our report in ANSI colour: position and message, numbered line, carets with the class.
        self.assertIn("\x1b[", tb[0])
        self.assertIn("no_such_name", tb[0])
        self.assertTrue(tb[1].endswith("no_such_name") and "1" in tb[1], tb)
        self.assertIn("^^^^^^^^^^^^ unknown name", tb[2])

    def test_aborted_cells_have_no_count(self):
        # A cell queued behind a failing one (stop_on_error) is aborted and
        # carries no execution count, so a front end shows it as not run.
        slow = self.kc.execute("s(x) = sin(x)^2; sum(map(s, 1 .. 200000))")
        bad = self.kc.execute("no_such_name")
        queued = self.kc.execute("1 + 1")
        replies = {}
        while len(replies) < 3:
            m = self.kc.get_shell_msg(timeout=TIMEOUT)
            replies[m["parent_header"].get("msg_id")] = m["content"]
        self.assertEqual(replies[slow]["status"], "ok")
        self.assertEqual(replies[bad]["status"], "error")
        self.assertEqual(replies[queued]["status"], "aborted")
        self.assertIsNone(replies[queued].get("execution_count"))

    def _interrupt(self, how):
        run(self.kc, "keep = 5; sq(x) = sin(x)^2; g(k) = sum(map(sq, 1 .. 100000))")
        msg_id = self.kc.execute("sum(map(g, 1 .. 5000))")  # minutes of work if not interrupted
        # Wait until the cell is running.
        while True:
            m = self.kc.get_iopub_msg(timeout=TIMEOUT)
            if m["parent_header"].get("msg_id") == msg_id and m["msg_type"] == "execute_input":
                break
        time.sleep(0.1)
        t0 = time.monotonic()
        how()
        while True:
            reply = self.kc.get_shell_msg(timeout=TIMEOUT)
            if reply["parent_header"].get("msg_id") == msg_id:
                break
        elapsed = time.monotonic() - t0
        self.assertEqual(reply["content"]["status"], "error")
        self.assertEqual(reply["content"]["ename"], "interrupted")
        self.assertLess(elapsed, 1.0)  # 0.5 s in the kernel, plus transport
        r, out = run(self.kc, "keep")
        self.assertEqual(r["status"], "ok", "variables must survive an interrupt")

    def test_interrupt_message(self):
        self.assertEqual(self.km.kernel_spec.interrupt_mode, "message")
        self._interrupt(self.km.interrupt_kernel)

    def test_interrupt_sigint(self):
        pid = self.km.provisioner.process.pid
        self._interrupt(lambda: os.kill(pid, signal.SIGINT))

    def test_restart(self):
        run(self.kc, "before = 1")
        old = self.km.provisioner.process.pid
        self.km.restart_kernel(now=False)
        self.kc.wait_for_ready(timeout=TIMEOUT)
        self.assertNotEqual(self.km.provisioner.process.pid, old)
        r, out = run(self.kc, "before")
        self.assertEqual(r["status"], "error", "a restarted kernel starts with a fresh session")
        r, out = run(self.kc, "1 + 1")
        self.assertEqual(r["execution_count"], 2)

    def test_shutdown(self):
        proc = self.km.provisioner.process
        self.km.shutdown_kernel(now=False)
        self.assertFalse(self.km.is_alive())
        self.assertEqual(proc.wait(timeout=5), 0, "kernel must exit cleanly after shutdown_request")

    def test_nbclient_notebook(self):
        nb = nbformat.v4.new_notebook()
        nb.metadata["kernelspec"] = {"name": "semiflow", "display_name": "Semiflow", "language": "semiflow"}
        nb.cells = [nbformat.v4.new_code_cell(c) for c in ['print("hi")', "1 + 2", "show(2 + 2)"]]
        NotebookClient(nb, timeout=TIMEOUT, kernel_name="semiflow").execute()
        nb2 = nbformat.reads(nbformat.writes(nb), as_version=4)
        nbformat.validate(nb2)
        outs = [c.outputs for c in nb2.cells]
        self.assertEqual(outs[0][0]["text"], "hi\n")
        self.assertEqual(outs[1][0]["data"]["text/plain"], "3")
        self.assertEqual(outs[1][0]["execution_count"], 2)
        self.assertEqual(outs[2][0]["output_type"], "display_data")

    def test_nbclient_error_output(self):
        # A failing cell becomes an error output (not stream text) in the
        # saved notebook, with our class as ename and a coloured traceback;
        # without allow_errors nbclient stops with our report.
        nb = nbformat.v4.new_notebook()
        nb.metadata["kernelspec"] = {"name": "semiflow", "display_name": "Semiflow", "language": "semiflow"}
        nb.cells = [nbformat.v4.new_code_cell(c) for c in ["x = 1", "x + [1, 2] * \"a\"", "x"]]
        NotebookClient(nb, timeout=TIMEOUT, kernel_name="semiflow", allow_errors=True).execute()
        nb2 = nbformat.reads(nbformat.writes(nb), as_version=4)
        nbformat.validate(nb2)
        outs = nb2.cells[1].outputs
        self.assertEqual([o["output_type"] for o in outs], ["error"])
        self.assertEqual(outs[0]["ename"], "wrong type")
        self.assertTrue(any("\x1b[" in l for l in outs[0]["traceback"]))
        self.assertEqual(nb2.cells[2].outputs[0]["data"]["text/plain"], "1")
        from nbclient.exceptions import CellExecutionError
        nb.cells = [nbformat.v4.new_code_cell("nope")]
        with self.assertRaises(CellExecutionError) as cm:
            NotebookClient(nb, timeout=TIMEOUT, kernel_name="semiflow").execute()
        self.assertIn("unknown name", str(cm.exception))


if __name__ == "__main__":
    sfrunner.main(__name__)
