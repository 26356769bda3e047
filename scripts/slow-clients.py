#!/usr/bin/env python3
"""Slow-client proof for the HTTP edge of `fluxbound serve`.

Starts the built binary on a free loopback port with a small connection cap
(the timeouts stay at their defaults, which this proves), then:

1. opens more silent connections than the cap, and slow-header connections
   that send one byte of a request head per second;
2. times normal `GET /healthz` requests on new connections meanwhile: each
   must answer 200 within 100 ms;
3. sends `Content-Length: 40000000` with `Expect: 100-continue`: the answer
   must be 413, at once, without `100 Continue`;
4. waits for the server to close every connection it holds: silent ones
   within the idle timeout, slow-header ones within the header-read timeout
   (each plus a scheduling margin).

Prints the figures; exits 0 on success, 1 on any failure. Python 3.11
standard library only; loopback only; stops by itself (about 15 s, never
more than RUN_LIMIT_S).

    python3 scripts/slow-clients.py [--bin target/debug/fluxbound]
        [--cap 50] [--silent 80] [--slow 20]
"""

from __future__ import annotations

import argparse
import os
import re
import selectors
import signal
import socket
import statistics
import subprocess
import sys
import tempfile
import threading
import time
from dataclasses import dataclass
from pathlib import Path

# The server's defaults (src/config.rs, ConnectionLimits), not overridden here.
IDLE_TIMEOUT_S = 5.0
HEADER_READ_TIMEOUT_S = 10.0
# Time allowed beyond a timeout for the server's and this script's
# scheduling on a busy machine.
CLOSE_MARGIN_S = 1.5
# The bound on a normal request while the cap is full (issue 12).
NORMAL_BOUND_S = 0.100
NORMAL_REQUESTS = 10
# The 413 must come before any body byte is sent; "at once" on loopback.
REFUSAL_BOUND_S = 1.0
STARTUP_LIMIT_S = 30.0
RUN_LIMIT_S = 120
SLOW_HEAD = b"GET /healthz HTTP/1.1\r\nHost: slow\r\nX-Pad: " + b"a" * 4096


@dataclass
class Held:
    sock: socket.socket
    kind: str  # "silent" or "slow"
    opened: float
    sent: int = 0
    closed: float | None = None


class Server:
    """The binary under test, its stderr drained by a thread."""

    def __init__(self, binary: str, cap: int, data_dir: str):
        env = {k: v for k, v in os.environ.items() if not k.startswith("FLUXBOUND_") and k != "DATABASE_URL"}
        env["RUST_LOG"] = "info"
        self.proc = subprocess.Popen(
            [binary, "serve", "--listen", "127.0.0.1:0", "--data-dir", data_dir, "--max-connections", str(cap)],
            stdin=subprocess.DEVNULL,
            stdout=subprocess.DEVNULL,
            stderr=subprocess.PIPE,
            env=env,
        )
        self.lines: list[str] = []
        self.port: int | None = None
        self.ready = threading.Event()
        threading.Thread(target=self._drain, daemon=True).start()

    def _drain(self) -> None:
        assert self.proc.stderr is not None
        for raw in self.proc.stderr:
            line = raw.decode("utf-8", "replace").rstrip()
            self.lines.append(line)
            m = re.search(r"listening on http://127\.0\.0\.1:(\d+)", line)
            if m and self.port is None:
                self.port = int(m.group(1))
                self.ready.set()
        self.ready.set()

    def wait_ready(self) -> int:
        if not self.ready.wait(STARTUP_LIMIT_S) or self.port is None:
            raise Failure("the server did not report its port")
        return self.port

    def stop(self) -> float | None:
        """SIGTERM, then seconds until it exited (None if it had to be killed)."""
        if self.proc.poll() is not None:
            return 0.0
        start = time.monotonic()
        self.proc.send_signal(signal.SIGTERM)
        try:
            self.proc.wait(timeout=30)
            return time.monotonic() - start
        except subprocess.TimeoutExpired:
            self.proc.kill()
            self.proc.wait()
            return None


class Failure(Exception):
    pass


def open_held(port: int, kind: str, sel: selectors.BaseSelector) -> Held:
    s = socket.create_connection(("127.0.0.1", port), timeout=5)
    s.setblocking(False)
    h = Held(s, kind, time.monotonic())
    sel.register(s, selectors.EVENT_READ, h)
    return h


def mark_closed(h: Held, sel: selectors.BaseSelector) -> None:
    if h.closed is None:
        h.closed = time.monotonic()
        sel.unregister(h.sock)
        h.sock.close()


def pump(sel: selectors.BaseSelector, held: list[Held], seconds: float, next_tick: list[float]) -> None:
    """Runs the event loop for `seconds`: notes closes, and sends the next
    byte of every slow head once per second."""
    end = time.monotonic() + seconds
    while True:
        now = time.monotonic()
        if now >= next_tick[0]:
            next_tick[0] = now + 1.0
            for h in held:
                if h.kind == "slow" and h.closed is None:
                    try:
                        h.sock.send(SLOW_HEAD[h.sent : h.sent + 1])
                        h.sent += 1
                    except OSError:
                        mark_closed(h, sel)
        if now >= end:
            return
        for key, _ in sel.select(timeout=max(0.0, min(end, next_tick[0]) - now)):
            h = key.data
            try:
                if h.sock.recv(4096) == b"":
                    mark_closed(h, sel)
            except BlockingIOError:
                pass
            except OSError:
                mark_closed(h, sel)


def exchange(port: int, request: bytes, limit_s: float) -> tuple[bytes, float]:
    """Sends `request` on a new connection; returns everything read until
    the server closes, and the seconds from connect to the close."""
    start = time.monotonic()
    with socket.create_connection(("127.0.0.1", port), timeout=limit_s) as s:
        s.sendall(request)
        got = b""
        while True:
            try:
                chunk = s.recv(65536)
            except (TimeoutError, socket.timeout):
                raise Failure(f"no end of answer within {limit_s} s: {got[:200]!r}") from None
            except ConnectionResetError:
                break
            if not chunk:
                break
            got += chunk
    return got, time.monotonic() - start


def status_of(answer: bytes) -> str:
    return answer.split(b"\r\n", 1)[0].decode("latin-1")


def normal_requests(port: int) -> list[float]:
    latencies = []
    for _ in range(NORMAL_REQUESTS):
        answer, took = exchange(port, b"GET /healthz HTTP/1.1\r\nHost: t\r\nConnection: close\r\n\r\n", 5.0)
        if not status_of(answer).startswith("HTTP/1.1 200"):
            raise Failure(f"GET /healthz answered {status_of(answer)!r} while the cap was full")
        latencies.append(took)
    return latencies


def refusal(port: int) -> float:
    head = (
        b"POST /v1/sites HTTP/1.1\r\nHost: t\r\nContent-Type: application/json\r\n"
        b"Content-Length: 40000000\r\nExpect: 100-continue\r\n\r\n"
    )
    answer, took = exchange(port, head, 5.0)
    if b"100 Continue" in answer:
        raise Failure("the server sent 100 Continue for a body over the bound")
    if not status_of(answer).startswith("HTTP/1.1 413"):
        raise Failure(f"expected 413, got {status_of(answer)!r}")
    if took > REFUSAL_BOUND_S:
        raise Failure(f"413 took {took * 1e3:.0f} ms")
    return took


def server_metrics(port: int) -> dict[str, str]:
    answer, _ = exchange(port, b"GET /metrics HTTP/1.1\r\nHost: t\r\nConnection: close\r\n\r\n", 5.0)
    found = re.findall(rb"^(fluxbound_http_connections_\w+) (\d+)$", answer, re.M)
    return {k.decode(): v.decode() for k, v in found}


def closing_figures(held: list[Held]) -> tuple[list[str], list[str]]:
    """Checks every held connection closed within its timeout; returns the
    figures and the failures."""
    figures, failures = [], []
    for kind, bound in (("silent", IDLE_TIMEOUT_S), ("slow", HEADER_READ_TIMEOUT_S)):
        mine = [h for h in held if h.kind == kind]
        still = [h for h in mine if h.closed is None]
        if still:
            failures.append(f"{len(still)} {kind} connection(s) still open after {bound + CLOSE_MARGIN_S} s")
        after = [h.closed - h.opened for h in mine if h.closed is not None]
        late = [a for a in after if a > bound + CLOSE_MARGIN_S]
        if late:
            failures.append(f"{len(late)} {kind} connection(s) closed late, up to {max(late):.1f} s")
        shed = [a for a in after if a < bound - 0.5]
        timed = [a for a in after if a >= bound - 0.5]
        if not timed:
            failures.append(f"no {kind} connection lasted to its timeout: nothing proven for them")
            continue
        figures.append(
            f"{kind}: {len(mine)} opened, {len(shed)} shed early, {len(timed)} closed by the server "
            f"after {min(timed):.2f}–{max(timed):.2f} s (timeout {bound:.0f} s)"
        )
    return figures, failures


def run(args: argparse.Namespace) -> list[str]:
    with tempfile.TemporaryDirectory(prefix="fluxbound-slow-") as data_dir:
        server = Server(args.bin, args.cap, data_dir)
        try:
            report = prove(server, args)
        except Failure:
            server.stop()
            print("\n".join(["server log (last 30 lines):", *server.lines[-30:]]), file=sys.stderr)
            raise
        except BaseException:
            server.stop()
            raise
        stopped = server.stop()
        if stopped is None:
            raise Failure("the server did not exit within 30 s of SIGTERM")
        return [*report, f"server exited {stopped * 1e3:.0f} ms after SIGTERM"]


def prove(server: Server, args: argparse.Namespace) -> list[str]:
    port = server.wait_ready()
    sel = selectors.DefaultSelector()
    held: list[Held] = []
    next_tick = [0.0]
    started = time.monotonic()
    for kind, n in (("silent", args.silent), ("slow", args.slow)):
        held.extend(open_held(port, kind, sel) for _ in range(n))
    pump(sel, held, 1.0, next_tick)
    open_before = sum(h.closed is None for h in held)
    latencies = normal_requests(port)
    refused_in = refusal(port)
    metrics = server_metrics(port)
    pump(sel, held, max(0.0, started + HEADER_READ_TIMEOUT_S + CLOSE_MARGIN_S + 0.5 - time.monotonic()), next_tick)
    figures, failures = closing_figures(held)
    worst = max(latencies)
    if worst > NORMAL_BOUND_S:
        failures.append(f"a normal request took {worst * 1e3:.1f} ms (bound {NORMAL_BOUND_S * 1e3:.0f} ms)")
    report = [
        f"cap {args.cap}; opened {args.silent} silent + {args.slow} slow-header connections; "
        f"{open_before} still held when the normal requests ran "
        f"(server: {metrics.get('fluxbound_http_connections_open', '?')} open, "
        f"{metrics.get('fluxbound_http_connections_shed_total', '?')} shed, "
        f"{metrics.get('fluxbound_http_connections_refused_total', '?')} refused)",
        f"GET /healthz on a new connection, {NORMAL_REQUESTS} times: all 200; median "
        f"{statistics.median(latencies) * 1e3:.1f} ms, worst {worst * 1e3:.1f} ms (bound {NORMAL_BOUND_S * 1e3:.0f} ms)",
        f"Content-Length 40000000 + Expect: 100-continue: 413 in {refused_in * 1e3:.1f} ms, no 100 Continue",
        *figures,
    ]
    if failures:
        print("\n".join(report))
        raise Failure("; ".join(failures))
    return report


def default_binary() -> str | None:
    root = Path(__file__).resolve().parent.parent
    for profile in ("release", "debug"):
        candidate = root / "target" / profile / "fluxbound"
        if candidate.is_file():
            return str(candidate)
    return None


def main() -> int:
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("--bin", default=default_binary(), help="the fluxbound binary (default: target/release, else target/debug)")
    p.add_argument("--cap", type=int, default=50, help="--max-connections given to the server")
    p.add_argument("--silent", type=int, default=80, help="silent connections to open")
    p.add_argument("--slow", type=int, default=20, help="slow-header connections to open")
    args = p.parse_args()
    if not args.bin or not os.access(args.bin, os.X_OK):
        print("slow-clients: build the binary first (cargo build) or pass --bin", file=sys.stderr)
        return 1
    if args.silent + args.slow <= args.cap:
        print("slow-clients: open more connections than the cap", file=sys.stderr)
        return 1

    def overrun(*_):
        raise Failure(f"the proof ran past {RUN_LIMIT_S} s")

    signal.signal(signal.SIGALRM, overrun)
    signal.alarm(RUN_LIMIT_S)
    try:
        for line in run(args):
            print(line)
    except Failure as e:
        print(f"FAIL: {e}", file=sys.stderr)
        return 1
    print("PASS")
    return 0


if __name__ == "__main__":
    sys.exit(main())
