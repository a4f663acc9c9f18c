#!/usr/bin/python3
"""Measures the installed semiflow kernel from a real client
(jupyter_client over libzmq): median execute round trip of a trivial cell,
CPU used by the kernel process over 5 s idle, and its resident set size.
Needs the kernelspec installed (see run_jupyter_tests.sh for the variables).
"""
import os
import statistics
import time

from jupyter_client.manager import start_new_kernel

km, kc = start_new_kernel(kernel_name="semiflow")
try:
    pid = km.provisioner.process.pid
    times = []
    for _ in range(500):
        t0 = time.perf_counter()
        kc.execute_interactive("1 + 2", output_hook=lambda m: None, timeout=10)
        times.append(time.perf_counter() - t0)
    times.sort()

    def ticks():
        f = open(f"/proc/{pid}/stat").read().rsplit(")", 1)[1].split()
        return int(f[11]) + int(f[12])

    time.sleep(0.5)
    t0 = ticks()
    time.sleep(5)
    idle_ms = (ticks() - t0) * 1000 / os.sysconf("SC_CLK_TCK")
    rss = [l for l in open(f"/proc/{pid}/status") if l.startswith("VmRSS")][0].split()[1]
    print(f"execute round trip: median {statistics.median(times)*1e3:.3f} ms, p90 {times[int(0.9*len(times))]*1e3:.3f} ms (n={len(times)})")
    print(f"idle CPU over 5 s: {idle_ms:.0f} ms; RSS {int(rss)/1024:.1f} MiB")
finally:
    kc.stop_channels()
    km.shutdown_kernel(now=False)
