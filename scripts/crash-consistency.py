#!/usr/bin/env python3
"""Crash consistency of the fluxbound server under write load.

Starts the server on a fresh database (SQLite in a temporary folder, or a
PostgreSQL database this script creates and drops), runs concurrent writers
that create and update sites and store assessments, and kills the server
with SIGKILL at random moments. After each restart it checks that

  * every acknowledged write (a 2xx answer) is there with what the answer
    said was stored: each acknowledged site revision reads back with the
    same name and document, each acknowledged assessment reads back equal;
  * nothing is half-written: every site in the listing has every revision
    from 1 to its latest readable; every stored assessment (acknowledged or
    not) names a revision of its site that reads back.

Writes whose answer never came (the server died first) are "in doubt":
they may or may not be stored, and either is correct.

Loopback only, bounded in time (--max-seconds), stops by itself. Python 3.11
standard library only. Exit status 0 when nothing was lost or half-written.

  scripts/crash-consistency.py --backend sqlite --cycles 20 --seed 1
  scripts/crash-consistency.py --backend postgres --cycles 20 --seed 1 \\
      --pg-url postgres://postgres@127.0.0.1:5432/postgres
"""

from __future__ import annotations

import argparse
import http.client
import json
import os
import random
import re
import shutil
import signal
import subprocess
import sys
import tempfile
import threading
import time
import urllib.parse
import uuid
from dataclasses import dataclass, field
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
HOST = "127.0.0.1"
# Seconds to wait for the server's "listening on" line after a start: far
# above the usual fraction of a second (migrations, a PostgreSQL connect).
START_TIMEOUT_S = 60.0
# Seconds one HTTP request may take before it is counted as in doubt.
REQUEST_TIMEOUT_S = 10.0
# Range of the write phase of a cycle before the kill, seconds: long enough
# for many commits, short enough that a kill often lands mid-transaction.
WRITE_PHASE_S = (0.3, 2.0)
LISTENING = re.compile(r"listening on http://127\.0\.0\.1:(\d+)")


def site_document(name: str, current_a: float) -> dict:
    """A small valid site: one long wire and one position (cheap to assess)."""
    return {
        "name": name,
        "frequency_hz": 50,
        "circuits": [{"id": "c", "kind": "single_phase", "current_a": current_a, "rated_current_a": 1000}],
        "conductors": [
            {"id": "w", "circuit": "c", "phase": "A", "radius_m": 0.01, "path": [[-100, 0, 0], [100, 0, 0]]}
        ],
        "positions": [{"id": "p", "at": [0.0, 0.5, 0.0]}],
    }


class Down(Exception):
    """The server did not answer. `sent` is False when the connection was
    refused (nothing happened), True when the request may have landed."""

    def __init__(self, message: str, sent: bool):
        super().__init__(message)
        self.sent = sent


@dataclass
class Server:
    """One fluxbound server process and where it listens."""

    binary: Path
    env: dict
    data_dir: Path
    log: Path
    process: subprocess.Popen | None = None
    port: int = 0

    def start(self) -> None:
        offset = self.log.stat().st_size if self.log.exists() else 0
        with open(self.log, "ab") as log:
            self.process = subprocess.Popen(
                [str(self.binary), "serve", "--listen", f"{HOST}:0", "--data-dir", str(self.data_dir)],
                env=self.env,
                stdin=subprocess.DEVNULL,
                stdout=log,
                stderr=log,
            )
        deadline = time.monotonic() + START_TIMEOUT_S
        while time.monotonic() < deadline:
            text = self.log.read_bytes()[offset:].decode("utf-8", "replace")
            found = LISTENING.search(text)
            if found:
                self.port = int(found.group(1))
                return
            if self.process.poll() is not None:
                raise SystemExit(f"the server exited with {self.process.returncode}:\n{text}")
            time.sleep(0.05)
        self.kill()
        raise SystemExit(f"no 'listening on' line within {START_TIMEOUT_S} s; see {self.log}")

    def kill(self) -> None:
        if self.process and self.process.poll() is None:
            self.process.send_signal(signal.SIGKILL)
            self.process.wait()

    def request(self, method: str, path: str, key: str, body=None, headers=None):
        """(status, headers, parsed JSON or None); raises Down without an answer."""
        conn = http.client.HTTPConnection(HOST, self.port, timeout=REQUEST_TIMEOUT_S)
        all_headers = {"Authorization": f"Bearer {key}", **(headers or {})}
        payload = None
        if body is not None:
            payload = json.dumps(body).encode()
            all_headers["Content-Type"] = "application/json"
        try:
            conn.connect()
        except OSError as e:
            conn.close()
            raise Down(str(e), sent=False) from e
        try:
            conn.request(method, path, body=payload, headers=all_headers)
            res = conn.getresponse()
            raw = res.read()
        except (OSError, http.client.HTTPException) as e:
            raise Down(str(e), sent=True) from e
        finally:
            conn.close()
        parsed = json.loads(raw) if raw and res.getheader("Content-Type", "").endswith("json") else None
        return res.status, res, parsed


@dataclass
class Ledger:
    """Acknowledged writes, shared by the writers (under `lock`)."""

    lock: threading.Lock = field(default_factory=threading.Lock)
    revisions: dict = field(default_factory=dict)  # (site_id, revision) -> (name, site document)
    assessments: dict = field(default_factory=dict)  # assessment id -> body
    in_doubt: int = 0
    unexpected: list = field(default_factory=list)


class Writer(threading.Thread):
    """Creates sites, updates its own sites (If-Match), stores assessments."""

    def __init__(self, index: int, seed: int, server: Server, key: str, ledger: Ledger, running: threading.Event):
        super().__init__(daemon=True)
        self.index, self.rng, self.server, self.key = index, random.Random(seed * 1000 + index), server, key
        self.ledger, self.running = ledger, running
        self.latest: dict[str, int] = {}  # own site id -> latest revision known
        self.stop = False

    def run(self) -> None:
        while not self.stop:
            if not self.running.wait(timeout=0.1):
                continue
            try:
                self.step()
            except Down as down:
                if down.sent:
                    with self.ledger.lock:
                        self.ledger.in_doubt += 1
                    # Our idea of a site's latest revision may be stale now.
                    self.latest = {site: 0 for site in self.latest}
                time.sleep(0.05)

    def step(self) -> None:
        choice = self.rng.random()
        if not self.latest or choice < 0.3:
            self.create()
        elif choice < 0.8:
            self.update(self.rng.choice(sorted(self.latest)))
        else:
            self.assess(self.rng.choice(sorted(self.latest)))

    def create(self) -> None:
        name = f"w{self.index}-{uuid.uuid4().hex[:8]}"
        status, _, body = self.server.request("POST", "/v1/sites", self.key, site_document(name, 100.0))
        if status == 201:
            self.record(body)
        else:
            self.unexpected("create", status, body)

    def update(self, site_id: str) -> None:
        if self.latest[site_id] == 0:
            status, _, body = self.server.request("GET", f"/v1/sites/{site_id}", self.key)
            if status != 200:
                return self.unexpected("resync", status, body)
            self.latest[site_id] = body["latest_revision"]
        revision = self.latest[site_id]
        name = f"w{self.index}-{site_id[-6:]}-r{revision + 1}"
        doc = site_document(name, round(self.rng.uniform(1, 999), 3))
        status, _, body = self.server.request(
            "PUT", f"/v1/sites/{site_id}", self.key, doc, {"If-Match": f'"{revision}"'}
        )
        if status == 200:
            self.record(body)
        elif status == 412:
            self.latest[site_id] = 0  # an in-doubt update did land: read it next time
        else:
            self.unexpected("update", status, body)

    def assess(self, site_id: str) -> None:
        revision = self.latest[site_id] or 1
        status, _, body = self.server.request("POST", f"/v1/sites/{site_id}/assessments", self.key, {"revision": revision})
        if status == 201:
            with self.ledger.lock:
                self.ledger.assessments[body["id"]] = body
        else:
            self.unexpected("assess", status, body)

    def record(self, body: dict) -> None:
        self.latest[body["id"]] = body["revision"]
        with self.ledger.lock:
            self.ledger.revisions[(body["id"], body["revision"])] = (body["name"], body["site"])

    def unexpected(self, what: str, status: int, body) -> None:
        with self.ledger.lock:
            self.ledger.unexpected.append(f"{what}: {status} {json.dumps(body)[:200]}")


def pages(server: Server, key: str, path: str):
    """Every item of a cursor-paged listing."""
    cursor = None
    while True:
        query = "?limit=100" + (f"&cursor={urllib.parse.quote(cursor)}" if cursor else "")
        status, _, body = server.request("GET", path + query, key)
        if status != 200:
            raise SystemExit(f"GET {path}{query}: {status} {body}")
        yield from body["items"]
        cursor = body.get("next_cursor")
        if not cursor:
            return


def verify(server: Server, key: str, ledger: Ledger) -> tuple[int, list, list]:
    """(acknowledged writes checked, lost writes, half-written records)."""
    lost, broken = [], []
    with ledger.lock:
        revisions = dict(ledger.revisions)
        assessments = dict(ledger.assessments)
    for (site_id, revision), (name, doc) in revisions.items():
        status, _, body = server.request("GET", f"/v1/sites/{site_id}/revisions/{revision}", key)
        if status != 200 or body["name"] != name or body["site"] != doc:
            lost.append(f"site {site_id} revision {revision}: {status}")
    for assessment_id, acked in assessments.items():
        status, _, body = server.request("GET", f"/v1/assessments/{assessment_id}", key)
        if status != 200 or body != acked:
            lost.append(f"assessment {assessment_id}: {status}")
    for site in pages(server, key, "/v1/sites"):
        for revision in range(1, site["latest_revision"] + 1):
            status, _, _ = server.request("GET", f"/v1/sites/{site['id']}/revisions/{revision}", key)
            if status != 200:
                broken.append(f"site {site['id']} revision {revision} of {site['latest_revision']}: {status}")
        for stored in pages(server, key, f"/v1/sites/{site['id']}/assessments"):
            if not 1 <= stored["site_revision"] <= site["latest_revision"]:
                broken.append(f"assessment {stored['id']} names revision {stored['site_revision']}")
    return len(revisions) + len(assessments), lost, broken


def stop_writers(writers: list, running: threading.Event) -> None:
    for w in writers:
        w.stop = True
    running.set()
    for w in writers:
        w.join(timeout=REQUEST_TIMEOUT_S + 1)


def make_key(binary: Path, env: dict, data_dir: Path) -> str:
    out = subprocess.run(
        [str(binary), "keys", "create", "--org", "crash", "--role", "assessor", "--data-dir", str(data_dir)],
        env=env, capture_output=True, text=True, timeout=START_TIMEOUT_S, check=False,
    )
    if out.returncode != 0:
        raise SystemExit(f"keys create failed: {out.stderr}")
    return out.stdout.strip().splitlines()[-1]


def psql(admin_url: str, sql: str) -> None:
    subprocess.run(["psql", admin_url, "-qAtc", sql], check=True, timeout=START_TIMEOUT_S, capture_output=True)


def run(args: argparse.Namespace, env: dict, data_dir: Path) -> int:
    rng = random.Random(args.seed)
    key = make_key(args.binary, env, data_dir)
    server = Server(args.binary, env, data_dir, data_dir / "server.log")
    ledger, running = Ledger(), threading.Event()
    writers = [Writer(i, args.seed, server, key, ledger, running) for i in range(args.writers)]
    deadline = time.monotonic() + args.max_seconds
    server.start()
    for w in writers:
        w.start()
    cycles, checked, lost, broken = 0, 0, [], []
    try:
        while cycles < args.cycles and time.monotonic() < deadline:
            running.set()
            time.sleep(rng.uniform(*WRITE_PHASE_S))
            server.kill()  # while the writers are still sending
            running.clear()
            server.start()
            cycles += 1
            checked, lost, broken = verify(server, key, ledger)
            print(f"cycle {cycles}: {checked} acknowledged, {len(lost)} lost, {len(broken)} half-written", flush=True)
            if lost or broken:
                break
        # Writes acknowledged while the last check ran are checked too.
        stop_writers(writers, running)
        if not lost and not broken:
            checked, lost, broken = verify(server, key, ledger)
    finally:
        stop_writers(writers, running)
        server.kill()
    for line in (lost + broken)[:20]:
        print("  " + line)
    for line in ledger.unexpected[:10]:
        print("  unexpected answer: " + line)
    print(f"backend {args.backend}: {cycles} cycles, {checked} acknowledged writes, "
          f"{len(lost)} lost writes, {len(broken)} half-written, {ledger.in_doubt} in doubt, "
          f"{len(ledger.unexpected)} unexpected answers")
    return 0 if cycles > 0 and not lost and not broken and not ledger.unexpected else 1


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--binary", type=Path, default=REPO / "target" / "debug" / "fluxbound",
                        help="the fluxbound binary (default target/debug/fluxbound; build it with cargo build)")
    parser.add_argument("--backend", choices=["sqlite", "postgres"], default="sqlite")
    parser.add_argument("--cycles", type=int, default=5, help="kill-and-restart cycles (default 5)")
    parser.add_argument("--seed", type=int, default=1, help="seeds the kill moments and the writers' choices")
    parser.add_argument("--writers", type=int, default=4, help="concurrent writer threads (default 4)")
    parser.add_argument("--max-seconds", type=float, default=600, help="stop after this long (default 600)")
    parser.add_argument("--pg-url", default=os.environ.get("FLUXBOUND_CRASH_PG_URL",
                                                          "postgres://postgres@127.0.0.1:5432/postgres"),
                        help="PostgreSQL admin URL (loopback); a database named fluxbound_crash_… is made on it")
    args = parser.parse_args()
    if not args.binary.is_file():
        raise SystemExit(f"no binary at {args.binary}: run `cargo build --bin fluxbound` or pass --binary")
    env = {k: v for k, v in os.environ.items() if k != "DATABASE_URL"}
    env.update(FLUXBOUND_RATE_PER_KEY="0", RUST_LOG=env.get("RUST_LOG", "warn,fluxbound=info"))
    data_dir = Path(tempfile.mkdtemp(prefix="fluxbound-crash-"))
    database = None
    try:
        if args.backend == "postgres":
            if urllib.parse.urlsplit(args.pg_url).hostname not in ("127.0.0.1", "localhost", "::1"):
                raise SystemExit("--pg-url must name a server on the loopback address")
            database = f"fluxbound_crash_{os.getpid()}_{uuid.uuid4().hex[:8]}"
            psql(args.pg_url, f"CREATE DATABASE {database}")
            env["DATABASE_URL"] = args.pg_url.rsplit("/", 1)[0] + "/" + database
        return run(args, env, data_dir)
    finally:
        if database:
            psql(args.pg_url, f"DROP DATABASE IF EXISTS {database} WITH (FORCE)")
        shutil.rmtree(data_dir, ignore_errors=True)


if __name__ == "__main__":
    sys.exit(main())
