#!/usr/bin/python3
"""Attack-and-soak suite for the semiflow kernel: starts the real binary on
loopback, attacks it the ways issue 14 lists, measures it from outside
(/proc/PID/status VmHWM and VmRSS, /proc/PID/fd, the size of its log), and
checks the goals:

  - resident memory (VmHWM, the peak) at most 300 MiB whatever
    unauthenticated peers send, under a 4 GiB address-space limit, and a
    normal client served during attacks;
  - refused peers leave no file descriptor behind;
  - 200,000 printed lines arrive whole, with the execute_result and the
    idle status; nothing is lost silently;
  - after an error reply the next request runs (it is not aborted);
  - a signed request replayed three times runs once;
  - 200,000 badly signed messages write a few log lines;
  - the kernel exits when its parent process dies, or the process named
    by JPY_PARENT_PID;
  - every reply of a 1,000-request burst arrives, in order;
  - a write to or read from a FIFO is refused at once;
  - interrupted heavy analyses (a Kreiss search at order 200, a dense
    spectrum at order 1500) answer within 0.5 s and the next cell runs at
    once.

It also measures execute latency (p50/p99) one at a time and under the
burst, and the time from interrupt_request to the interrupted cell's reply,
and prints a summary table. The clients are Debian's jupyter_client and
pyzmq (libzmq) under /usr/bin/python3; the raw attacks speak ZMTP 3.0
(RFC 23/ZMTP) over plain sockets.

usage: attack_soak.py SEMIFLOW_BINARY     (last line: 'N passed, M failed')
"""
import json
import os
import queue
import signal
import socket
import statistics
import struct
import subprocess
import sys
import tempfile
import threading
import time

import zmq
from jupyter_client import BlockingKernelClient
from jupyter_client.connect import write_connection_file
from jupyter_client.session import Session

RSS_LIMIT_MIB = 300
AS_LIMIT = 4 << 30  # the main kernel runs under this address-space limit (RLIMIT_AS)
BINARY = os.path.abspath(sys.argv[1]) if len(sys.argv) > 1 else None
TMP = tempfile.mkdtemp(prefix="sf-attack-")
results = []  # (check, ok, detail)
figures = []  # (measure, value)


def check(name, ok, detail=""):
    results.append((name, bool(ok), detail))
    print(f"{'PASS' if ok else 'FAIL'}  {name}  {detail}", flush=True)


def figure(name, value):
    figures.append((name, value))
    print(f"      {name}: {value}", flush=True)


def status_kib(pid, field):
    with open(f"/proc/{pid}/status") as f:
        for line in f:
            if line.startswith(field + ":"):
                return int(line.split()[1])
    return 0


def fds(pid):
    return len(os.listdir(f"/proc/{pid}/fd"))


# ---------------------------------------------------------------- kernel

class Kernel:
    """One kernel process on loopback, with its log in a file."""

    def __init__(self, name, env=None, argv_prefix=None, as_limit=None):
        key = os.urandom(16).hex()
        self.cf, self.info = write_connection_file(
            fname=os.path.join(TMP, name + ".json"), ip="127.0.0.1", key=key.encode())
        self.key = key.encode()
        self.log_path = os.path.join(TMP, name + ".log")
        self.log = open(self.log_path, "wb")
        e = dict(os.environ)
        e.update(env or {})
        argv = [BINARY, "kernel", self.cf]
        if argv_prefix:  # started through a parent shell that prints the kernel's pid
            self.parent = subprocess.Popen(argv_prefix + [" ".join(argv) + " & echo $!; wait"],
                                           stdout=subprocess.PIPE, stderr=self.log, env=e)
            self.pid = int(self.parent.stdout.readline())
            self.proc = None
        else:
            def limit():
                if as_limit:
                    import resource
                    resource.setrlimit(resource.RLIMIT_AS, (as_limit, as_limit))
            self.proc = subprocess.Popen(argv, stdout=self.log, stderr=self.log, env=e, preexec_fn=limit)
            self.pid = self.proc.pid
        self.kc = None

    def client(self):
        kc = BlockingKernelClient(connection_file=self.cf)
        kc.load_connection_file()
        kc.start_channels()
        kc.wait_for_ready(timeout=30)
        self.kc = kc
        return kc

    def alive(self):
        try:
            os.kill(self.pid, 0)
        except ProcessLookupError:
            return False
        if self.proc is not None:
            return self.proc.poll() is None
        try:  # a zombie is not alive
            with open(f"/proc/{self.pid}/stat") as f:
                return f.read().rsplit(")", 1)[1].split()[0] != "Z"
        except FileNotFoundError:
            return False

    def hwm_mib(self):
        return status_kib(self.pid, "VmHWM") / 1024

    def rss_mib(self):
        return status_kib(self.pid, "VmRSS") / 1024

    def stop(self):
        if self.kc is not None:
            self.kc.stop_channels()
        if self.alive():
            os.kill(self.pid, signal.SIGTERM)
        if self.proc is not None:
            try:
                self.proc.wait(timeout=5)
            except subprocess.TimeoutExpired:
                self.proc.kill()
        self.log.close()


def run_cell(kc, code, timeout=60):
    """Executes code; returns (reply content, iopub messages of the request)."""
    msg_id = kc.execute(code)
    reply = kc.get_shell_msg(timeout=timeout)
    while reply["parent_header"].get("msg_id") != msg_id:
        reply = kc.get_shell_msg(timeout=timeout)
    msgs = []
    deadline = time.time() + timeout
    while time.time() < deadline:
        m = kc.get_iopub_msg(timeout=max(0.1, deadline - time.time()))
        if m["parent_header"].get("msg_id") != msg_id:
            continue
        msgs.append(m)
        if m["msg_type"] == "status" and m["content"]["execution_state"] == "idle":
            break
    return reply["content"], msgs


def served(kc, code="1 + 2", timeout=10):
    try:
        c, _ = run_cell(kc, code, timeout)
        return c["status"] == "ok"
    except Exception:
        return False


def drain_iopub(kc):
    while True:
        try:
            kc.get_iopub_msg(timeout=0.05)
        except queue.Empty:
            return


# ---------------------------------------------------------------- ZMTP by hand

GREETING = b"\xff" + b"\0" * 8 + b"\x7f" + bytes([3, 0]) + b"NULL".ljust(20, b"\0") + b"\0" * 32


def ready(sock_type):
    t = sock_type.encode()
    body = b"\x05READY" + b"\x0bSocket-Type" + struct.pack(">I", len(t)) + t
    return b"\x04" + bytes([len(body)]) + body


def raw_peer(port, sock_type="DEALER", timeout=5):
    s = socket.create_connection(("127.0.0.1", port), timeout=timeout)
    s.sendall(GREETING + ready(sock_type))
    return s


def long_frame_header(size, more=False):
    return bytes([0x02 | (0x01 if more else 0)]) + struct.pack(">Q", size)


def send_until_closed(s, chunk, limit_bytes, deadline):
    sent = 0
    try:
        while sent < limit_bytes and time.time() < deadline:
            s.sendall(chunk)
            sent += len(chunk)
    except OSError:
        pass
    return sent


# ---------------------------------------------------------------- attacks

def attack_empty_frames(k, kc):
    """One endless message of empty frames, reconnecting whenever cut off,
    until 94 MB have gone out (the issue's figure) or 20 s have passed."""
    chunk = b"\x01\x00" * 32768
    total, conns, deadline = 0, 0, time.time() + 20
    while total < 94_000_000 and time.time() < deadline:
        try:
            s = raw_peer(k.info["shell_port"])
        except OSError:
            continue
        conns += 1
        total += send_until_closed(s, chunk, 94_000_000 - total, deadline)
        s.close()
    ok = served(kc)
    check("empty-frame flood: kernel serves a client afterwards", ok, f"{total/1e6:.0f} MB over {conns} connections")
    return total


def attack_oversize(k, kc):
    """16 peers each sending a frame announced at 255 MB as fast as they can,
    and 40 peers announcing 255 MB frames and sending 4 MB of each, on shell,
    control and stdin, while a client keeps executing cells."""
    ports = [k.info["shell_port"], k.info["control_port"], k.info["stdin_port"]]
    deadline = time.time() + 25
    sent = [0]
    lock = threading.Lock()

    def peer(i, amount):
        try:
            s = raw_peer(ports[i % 3], timeout=30)
            s.sendall(long_frame_header(255_000_000))
            n = send_until_closed(s, b"\0" * (1 << 20), amount, deadline)
            with lock:
                sent[0] += n
            time.sleep(max(0, min(3, deadline - time.time())))
            s.close()
        except OSError:
            pass

    threads = [threading.Thread(target=peer, args=(i, 255_000_000)) for i in range(16)]
    threads += [threading.Thread(target=peer, args=(i, 4 << 20)) for i in range(40)]
    for t in threads:
        t.start()
    lat, fails = [], 0
    while any(t.is_alive() for t in threads) and time.time() < deadline + 5:
        t0 = time.perf_counter()
        if served(kc):
            lat.append(time.perf_counter() - t0)
        else:
            fails += 1
    for t in threads:
        t.join()
    check("oversize frames from 56 peers: a client is served throughout", fails == 0 and lat,
          f"{len(lat)} cells ran during the attack, {fails} failed; {sent[0]/1e6:.0f} MB sent by attackers")
    if lat:
        figure("execute latency during the oversize attack, p50 / max (ms)",
               f"{statistics.median(lat)*1e3:.1f} / {max(lat)*1e3:.1f}")


def attack_budget(k, kc):
    """40 peers each announcing a frame just under the per-message cap
    (16 MiB) and sending 16 MB of it, 640 MB in all, against the shared
    budget of unauthenticated bytes (32 MiB), while a client keeps executing
    cells."""
    ports = [k.info["shell_port"], k.info["control_port"], k.info["stdin_port"]]
    deadline = time.time() + 30
    sent, cut = [0], [0]
    lock = threading.Lock()

    def peer(i):
        try:
            s = raw_peer(ports[i % 3], timeout=30)
            s.sendall(long_frame_header(16_500_000))
            n = send_until_closed(s, b"\0" * (1 << 20), 16_000_000, deadline)
            with lock:
                sent[0] += n
                cut[0] += n < 16_000_000
            time.sleep(max(0, min(2, deadline - time.time())))
            s.close()
        except OSError:
            pass

    threads = [threading.Thread(target=peer, args=(i,)) for i in range(40)]
    for t in threads:
        t.start()
    lat, fails = [], 0
    while any(t.is_alive() for t in threads) and time.time() < deadline + 5:
        t0 = time.perf_counter()
        if served(kc):
            lat.append(time.perf_counter() - t0)
        else:
            fails += 1
    for t in threads:
        t.join()
    check("40 peers x 16 MB of 16.5 MB frames: a client is served throughout", fails == 0 and lat,
          f"{len(lat)} cells ran, {fails} failed; {sent[0]/1e6:.0f} MB sent by attackers, {cut[0]} cut off")
    if lat:
        figure("execute latency during the budget attack, p50 / max (ms)",
               f"{statistics.median(lat)*1e3:.1f} / {max(lat)*1e3:.1f}")


def attack_connection_flood(k, kc):
    """6,000 connections that complete the handshake and then say nothing,
    spread over the five ports, held open together."""
    ports = [k.info[p] for p in ("shell_port", "control_port", "stdin_port", "iopub_port", "hb_port")]
    types = ["DEALER", "DEALER", "DEALER", "SUB", "REQ"]
    socks, failed = [], 0
    for i in range(6000):
        try:
            socks.append(raw_peer(ports[i % 5], types[i % 5]))
        except OSError:
            failed += 1
    time.sleep(1)
    peak_fds = fds(k.pid)
    ok = served(kc)
    for s in socks:
        s.close()
    time.sleep(0.5)
    check("6,000 idle connections: descriptors bounded, a client served", ok and peak_fds <= 2 * 1024 + 64,
          f"kernel fds at most {peak_fds} (cap 1024 per transport); {failed} connects failed")
    figure("descriptors held by the kernel under 6,000 idle connections", peak_fds)


def attack_wrong_type(k, kc):
    before = fds(k.pid)
    n = 500
    kinds = [("shell_port", "PUB"), ("control_port", "SUB"), ("iopub_port", "DEALER"), ("hb_port", "PUB"), ("stdin_port", "PULL")]
    closed = 0
    for i in range(n):
        port, typ = kinds[i % len(kinds)]
        s = raw_peer(k.info[port], typ)
        s.settimeout(5)
        try:
            while s.recv(4096):
                pass
            closed += 1
        except OSError:
            pass
        s.close()
    time.sleep(0.3)
    after = fds(k.pid)
    check("wrong socket type x500: every connection closed, descriptors bounded",
          closed == n and after <= before + 5, f"{closed}/{n} closed by the kernel; fds {before} -> {after}")
    check("wrong socket type: kernel serves a client afterwards", served(kc))


def attack_print_lines(k, kc):
    n = 200_000
    code = f'p(i) = print("line", i)\nq = map(p, 1 .. {n})\n"done"'
    t0 = time.perf_counter()
    reply, msgs = run_cell(kc, code, timeout=120)
    el = time.perf_counter() - t0
    text = "".join(m["content"]["text"] for m in msgs if m["msg_type"] == "stream")
    lines = text.splitlines()
    expected = [f"line {i}" for i in range(1, n + 1)]
    shown = [l for l in lines if not l.startswith("[semiflow:")]
    markers = [l for l in lines if l.startswith("[semiflow:")]
    omitted = sum(int(l.split()[1]) for l in markers)
    types = [m["msg_type"] for m in msgs]
    whole = shown == expected
    accounted = len(shown) + omitted == n and all(l in expected for l in shown[:10])
    check("200,000 printed lines: all arrive (or are counted in a marker)", whole or accounted,
          f"{len(shown)} shown, {omitted} marked as left out, {sum(t == 'stream' for t in types)} stream messages")
    check("200,000 printed lines: execute_result and idle status arrive",
          reply["status"] == "ok" and "execute_result" in types and types[-1] == "status", f"{el:.1f} s")
    figure("200,000 print lines: time to idle (s)", f"{el:.1f}")


def attack_error_then_next(k, kc):
    """200 rounds: a failing cell, then, as soon as its error reply is in,
    a burst of five cells: all five must run."""
    wrong = 0
    for r in range(200):
        bad = kc.execute("1/0")
        while True:
            m = kc.get_shell_msg(timeout=10)
            if m["parent_header"].get("msg_id") == bad:
                break
        ids = [kc.execute(f"{r} + {j}") for j in range(5)]
        got = {}
        while len(got) < 5:
            m = kc.get_shell_msg(timeout=10)
            pid = m["parent_header"].get("msg_id")
            if pid in ids:
                got[pid] = m["content"]["status"]
        wrong += sum(s != "ok" for s in got.values())
    drain_iopub(kc)
    check("error then next request (200 rounds x 5): none aborted", wrong == 0, f"{wrong} of 1000 wrongly aborted")


def attack_replay(k, kc):
    ctx = zmq.Context.instance()
    d = ctx.socket(zmq.DEALER)
    d.linger = 0
    d.connect(f"tcp://127.0.0.1:{k.info['shell_port']}")
    sess = Session(key=k.key)
    msg = sess.msg("execute_request", content={"code": "replayed = 1", "silent": False, "store_history": True,
                                               "user_expressions": {}, "allow_stdin": False, "stop_on_error": True})
    frames = sess.serialize(msg)
    for _ in range(3):
        d.send_multipart(frames)
    replies = 0
    poller = zmq.Poller()
    poller.register(d, zmq.POLLIN)
    deadline = time.time() + 3
    while time.time() < deadline:
        if poller.poll(200):
            parts = d.recv_multipart()
            i = parts.index(b"<IDS|MSG>")
            if json.loads(parts[i + 3]).get("msg_id") == msg["header"]["msg_id"]:
                replies += 1
    d.close()
    check("signed request replayed x3: runs once", replies == 1, f"{replies} replies")


def attack_bad_signatures(k, kc):
    ctx = zmq.Context.instance()
    d = ctx.socket(zmq.DEALER)
    d.linger = 0
    d.sndhwm = 0
    d.connect(f"tcp://127.0.0.1:{k.info['shell_port']}")
    time.sleep(0.2)
    k.log.flush()
    size0 = os.path.getsize(k.log_path)
    hdr = json.dumps({"msg_id": "x", "msg_type": "execute_request", "session": "s", "username": "u",
                      "date": "2026-12-02T00:00:00Z", "version": "5.3"}).encode()
    content = json.dumps({"code": "hacked = 1"}).encode()
    n = 200_000
    t0 = time.perf_counter()
    for i in range(n):
        d.send_multipart([b"<IDS|MSG>", b"%064x" % i, hdr, b"{}", b"{}", content])
    ok = served(kc, timeout=60)
    el = time.perf_counter() - t0
    time.sleep(0.5)
    grew = os.path.getsize(k.log_path) - size0
    d.close()
    check("200,000 badly signed messages: log grows by at most 16 KiB", grew <= 16 << 10, f"{grew} bytes of log")
    check("bad-signature flood: kernel serves a client afterwards", ok, f"{el:.1f} s to send and be served")
    c, _ = run_cell(kc, "hacked")
    check("bad-signature flood: nothing ran", c["status"] == "error", c.get("ename", ""))


def measure_latency(k, kc):
    lat = []
    for i in range(300):
        t0 = time.perf_counter()
        msg_id = kc.execute(f"{i} + 1")
        while kc.get_shell_msg(timeout=10)["parent_header"].get("msg_id") != msg_id:
            pass
        lat.append(time.perf_counter() - t0)
    drain_iopub(kc)
    lat.sort()
    figure("execute latency one at a time, p50 / p99 (ms)",
           f"{lat[len(lat)//2]*1e3:.2f} / {lat[int(len(lat)*0.99)]*1e3:.2f}")

    n = 1000
    sent = {}
    order = []
    t_start = time.perf_counter()
    for i in range(n):
        mid = kc.execute(f"{i} * 2")
        sent[mid] = time.perf_counter()
        order.append(mid)
    got, lat_b = [], []
    counts = []
    while len(got) < n:
        m = kc.get_shell_msg(timeout=60)
        pid = m["parent_header"].get("msg_id")
        if pid in sent:
            got.append(pid)
            lat_b.append(time.perf_counter() - sent[pid])
            counts.append(m["content"].get("execution_count", 0))
    total = time.perf_counter() - t_start
    drain_iopub(kc)
    check("1,000-request burst: every reply, in order", got == order and counts == sorted(counts),
          f"{len(got)} replies in {total:.2f} s")
    lat_b.sort()
    figure("execute latency in a 1,000-request burst, p50 / p99 (ms)",
           f"{lat_b[n//2]*1e3:.1f} / {lat_b[int(n*0.99)]*1e3:.1f}")


def measure_interrupt(k, kc):
    code = "s(x) = sin(x) * cos(x)\ninner(j) = sum(map(s, 1 .. 1000))\nouter = map(inner, 1 .. 100000)"
    times, ok = [], True
    for _ in range(5):
        msg_id = kc.execute(code)
        time.sleep(0.5)
        t0 = time.perf_counter()
        kc.control_channel.send(kc.session.msg("interrupt_request", content={}))  # interrupt_mode "message"
        while True:
            m = kc.get_shell_msg(timeout=10)
            if m["parent_header"].get("msg_id") == msg_id:
                break
        times.append(time.perf_counter() - t0)
        ok = ok and m["content"]["status"] == "error"
    drain_iopub(kc)
    check("interrupt: each long cell stops with an error reply", ok, f"{len(times)} interrupts")
    figure("interrupt latency, median / max (ms)", f"{statistics.median(times)*1e3:.0f} / {max(times)*1e3:.0f}")
    return max(times)


def interrupt_heavy(k, kc):
    """Item 10: a whole Kreiss search (search="full") on a 200x200 matrix and the dense spectrum of
    a 1500x1500 one (an uninterruptible library call, abandoned) are
    interrupted 0.5 s after they start; each must answer the interrupt
    within 0.5 s and the next cell must run at once, not after the
    abandoned work."""
    setup = ("g = interval(0, 1, 202)\nA = dense(0.005*laplacian(g) - deriv(g))\n"
             "h = interval(0, 1, 1502)\nC = dense(0.01*laplacian(h) - deriv(h))\nkept = 5")
    c, _ = run_cell(kc, setup, timeout=60)
    check("heavy interrupts: setup cell runs", c["status"] == "ok", c.get("evalue", ""))
    for name, code in [("kreiss 200x200", "y = kreiss(A, search=\"full\")"), ("dense spectrum 1500x1500", "y = spectrum(C)")]:
        msg_id = kc.execute(code)
        time.sleep(0.5)
        t0 = time.perf_counter()
        kc.control_channel.send(kc.session.msg("interrupt_request", content={}))
        while True:
            m = kc.get_shell_msg(timeout=30)
            if m["parent_header"].get("msg_id") == msg_id:
                break
        stop = time.perf_counter() - t0
        t1 = time.perf_counter()
        nxt, _ = run_cell(kc, "kept + 1", timeout=30)
        nxt_s = time.perf_counter() - t1
        drain_iopub(kc)
        check(f"interrupt {name}: 'interrupted' reply within 0.5 s",
              m["content"].get("ename") == "interrupted" and stop <= 0.5,
              f"{m['content'].get('ename', '')}; {stop*1e3:.0f} ms")
        check(f"interrupt {name}: the next cell runs at once (0.5 s)", nxt["status"] == "ok" and nxt_s <= 0.5,
              f"{nxt_s*1e3:.0f} ms")
        figure(f"interrupt {name}: to the reply / next cell answered (ms)", f"{stop*1e3:.0f} / {nxt_s*1e3:.0f}")


def fifo_cells(k, kc):
    """Item 4: writing to or reading from a FIFO nobody opens is refused at
    once with a file error, and the next cell runs."""
    fifo = os.path.join(TMP, "nobody-reads")
    os.mkfifo(fifo)
    for code in [f'writecsv([1, 2], "{fifo}")', f'readmm("{fifo}")']:
        t0 = time.perf_counter()
        c, _ = run_cell(kc, code, timeout=30)
        el = time.perf_counter() - t0
        check(f"FIFO: {code.split('(')[0]} refused at once", c["status"] == "error" and el < 1,
              f"{c.get('ename', '')}: {c.get('evalue', '')[:80]}; {el*1e3:.0f} ms")
    check("FIFO: the next cell runs", served(kc))


def parent_death():
    # 1. The parent process dies: the kernel is adopted by another process.
    k = Kernel("orphan", argv_prefix=["sh", "-c"])
    k.client()
    os.kill(k.parent.pid, signal.SIGKILL)
    k.parent.wait()
    t0 = time.time()
    while k.alive() and time.time() - t0 < 10:
        time.sleep(0.1)
    check("parent dies: the kernel exits", not k.alive(), f"after {time.time()-t0:.1f} s")
    k.stop()
    # 2. The process named by JPY_PARENT_PID exits.
    sleeper = subprocess.Popen(["sleep", "60"])
    k = Kernel("jpy", env={"JPY_PARENT_PID": str(sleeper.pid)})
    k.client()
    sleeper.kill()
    sleeper.wait()
    t0 = time.time()
    while k.alive() and time.time() - t0 < 10:
        time.sleep(0.1)
    check("JPY_PARENT_PID process exits: the kernel exits", not k.alive(), f"after {time.time()-t0:.1f} s")
    k.stop()


def main():
    import resource
    soft, hard = resource.getrlimit(resource.RLIMIT_NOFILE)
    want = 8192 if hard == resource.RLIM_INFINITY else min(hard, 8192)
    resource.setrlimit(resource.RLIMIT_NOFILE, (max(soft, want), hard))
    if not BINARY or not os.access(BINARY, os.X_OK):
        print(__doc__)
        print("0 passed, 1 failed (no semiflow binary given)")
        return 1
    t_all = time.time()
    k = Kernel("main", as_limit=AS_LIMIT)
    kc = k.client()
    figure("resident size after start (MiB)", f"{k.rss_mib():.1f}")
    steps = [
        ("empty-frame flood", attack_empty_frames),
        ("oversize frames, many peers", attack_oversize),
        ("budget: 40 peers near the cap", attack_budget),
        ("wrong socket type x500", attack_wrong_type),
        ("6,000 idle connections", attack_connection_flood),
        ("replay x3", attack_replay),
        ("bad-signature flood", attack_bad_signatures),
        ("latency", measure_latency),
        ("error then next", attack_error_then_next),
        ("200,000 print lines", attack_print_lines),
        ("interrupt", measure_interrupt),
        ("FIFO cells", fifo_cells),
        ("heavy interrupts", interrupt_heavy),
    ]
    peak_unauth = 0
    for name, f in steps:
        print(f"=== {name}", flush=True)
        t0 = time.time()
        try:
            f(k, kc)
        except Exception as e:  # a hung or crashed kernel shows up here
            check(f"{name}: completed", False, repr(e))
        alive = k.alive()
        if not alive:
            check(f"{name}: kernel still running", False)
            break
        hwm = k.hwm_mib()
        print(f"      ({time.time()-t0:.1f} s; VmHWM so far {hwm:.1f} MiB, VmRSS {k.rss_mib():.1f} MiB)", flush=True)
        if name in ("empty-frame flood", "oversize frames, many peers", "budget: 40 peers near the cap",
                    "wrong socket type x500", "6,000 idle connections", "replay x3", "bad-signature flood"):
            peak_unauth = hwm
    figure("peak resident size (VmHWM) after the unauthenticated attacks (MiB)", f"{peak_unauth:.1f}")
    if k.alive():
        figure(f"peak address space (VmPeak, limit {AS_LIMIT >> 30} GiB) (MiB)", f"{status_kib(k.pid, 'VmPeak')/1024:.0f}")
    check(f"peak resident size under unauthenticated attacks <= {RSS_LIMIT_MIB} MiB", 0 < peak_unauth <= RSS_LIMIT_MIB,
          f"{peak_unauth:.1f} MiB")
    if k.alive():
        figure("peak resident size (VmHWM) over the whole run (MiB)", f"{k.hwm_mib():.1f}")
        check("kernel alive and serving at the end", served(kc))
    k.stop()
    print("=== parent death", flush=True)
    parent_death()

    print()
    print("Summary (semiflow kernel, attack-and-soak suite)")
    w = max(len(n) for n, _ in figures)
    for n, v in figures:
        print(f"  {n.ljust(w)}  {v}")
    passed = sum(ok for _, ok, _ in results)
    failed = len(results) - passed
    print(f"  checks: {passed} passed, {failed} failed; {time.time()-t_all:.0f} s in all")
    print(f"{passed} passed, {failed} failed")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
