#!/usr/bin/env python3
"""Contract fuzzing of the live server with schemathesis (pinned in
scripts/requirements-fuzz.txt) against the OpenAPI document it serves.

Starts the given binary on the embedded SQLite in a temporary directory on a
free loopback port, seeds one organisation (an admin key, two sites, an
assessment, a survey and a custom table) so that generated requests reach
past "not found", runs schemathesis for a bounded time, then reads the
server's own /metrics to count requests and 5xx answers. Fails when
schemathesis reports a failure (server error, undocumented status, wrong
content type, response off its schema) or when the server counted any 5xx.

    python3 scripts/contract-fuzz.py --binary target/debug/fluxbound --max-time 120

Stops by itself: the server is killed on every exit path.
"""

import argparse
import http.client
import json
import os
import re
import shutil
import socket
import subprocess
import sys
import tempfile
import time

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
CHECKS = "not_a_server_error,status_code_conformance,content_type_conformance,response_schema_conformance"


def free_port():
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def request(port, method, path, key=None, body=None):
    conn = http.client.HTTPConnection("127.0.0.1", port, timeout=30)
    headers = {}
    if key:
        headers["Authorization"] = f"Bearer {key}"
    data = None
    if body is not None:
        data = json.dumps(body).encode()
        headers["Content-Type"] = "application/json"
    conn.request(method, path, body=data, headers=headers)
    res = conn.getresponse()
    text = res.read().decode()
    conn.close()
    return res.status, text


def created(port, path, key, body):
    status, text = request(port, "POST", path, key, body)
    if status != 201:
        sys.exit(f"seeding {path} failed: {status} {text[:300]}")
    return json.loads(text)


def new_key(binary, data_dir, label):
    out = subprocess.run(
        [binary, "keys", "create", "--org", "fuzz", "--role", "admin", "--label", label, "--data-dir", data_dir],
        check=True, capture_output=True, text=True,
    )
    return out.stdout.strip()


def example(name):
    with open(os.path.join(ROOT, "examples", name), encoding="utf-8") as f:
        return json.load(f)


def seed(port, key):
    """Resources the generated requests address, by operation parameter."""
    site = created(port, "/v1/sites", key, example("site-switch-room.json"))["id"]
    doomed = created(port, "/v1/sites", key, example("site-furnace-feeder.json"))["id"]
    assessment = created(port, f"/v1/sites/{site}/assessments", key, {})
    areas = assessment.get("result", {}).get("areas", [])
    area = areas[0]["id"] if areas else "none"
    survey = created(port, f"/v1/sites/{site}/surveys", key, example("survey-switch-room.json"))["id"]
    table = {
        "id": "fuzz-flat", "title": "Flat test level", "source": "Invented for contract fuzzing",
        "applies_to": {"population": "workers", "body_region": "whole_body"}, "kind": "screening",
        "bands": [{"from_hz": 1, "to_hz": 3000, "coefficient": 500, "exponent": 0}],
    }
    created(port, "/v1/tables", key, table)
    return {"site": site, "doomed": doomed, "assessment": assessment["id"], "area": area,
            "survey": survey, "table": "fuzz-flat"}


def config_text(ids, spare_key_id):
    """schemathesis.toml: fixed ids so requests reach the handlers; the
    destructive operations get their own targets (a second site, a second
    admin key) so the rest keep theirs."""
    return f"""
[parameters]
"path.site_id" = "{ids['site']}"
"path.assessment_id" = "{ids['assessment']}"
"path.area_id" = "{ids['area']}"
"path.survey_id" = "{ids['survey']}"
"path.table_id" = "{ids['table']}"
"path.key_id" = "{spare_key_id}"

[[operations]]
include-name = "DELETE /v1/sites/{{site_id}}"
parameters = {{ "path.site_id" = "{ids['doomed']}" }}
"""


def metrics_counts(port):
    status, text = request(port, "GET", "/metrics")
    total = errors = 0
    for line in text.splitlines():
        m = re.match(r'^\w*requests_total\{(.*)\}\s+(\d+)', line)
        if not m:
            continue
        n = int(m.group(2))
        total += n
        st = re.search(r'status="(\d+)"', m.group(1))
        if st and st.group(1).startswith("5"):
            errors += n
    return total, errors


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--binary", default=os.path.join(ROOT, "target", "debug", "fluxbound"))
    ap.add_argument("--st", default=shutil.which("st") or "st", help="the schemathesis command")
    ap.add_argument("--max-time", type=int, default=120, help="seconds of generated requests")
    ap.add_argument("--workers", default="1", help="concurrent schemathesis workers (1: hypothesis on CPython 3.11 is not thread-safe in its lambda descriptions)")
    ap.add_argument("--seed", default=None)
    args = ap.parse_args()

    work = tempfile.mkdtemp(prefix="fluxbound-fuzz-")
    data_dir = os.path.join(work, "data")
    key = new_key(args.binary, data_dir, "fuzzer")
    spare = new_key(args.binary, data_dir, "spare")
    spare_id = spare.split("_")[1]
    port = free_port()
    log = open(os.path.join(work, "server.log"), "w")
    server = subprocess.Popen(
        [args.binary, "serve", "--listen", f"127.0.0.1:{port}", "--data-dir", data_dir, "--rate-per-key", "0"]
        + extra_serve_flags(args.binary),
        stdout=log, stderr=log,
    )
    try:
        wait_up(port, server)
        ids = seed(port, key)
        config = os.path.join(work, "schemathesis.toml")
        with open(config, "w") as f:
            f.write(config_text(ids, spare_id))
        cmd = [args.st, "--config-file", config, "run", f"http://127.0.0.1:{port}/openapi.json",
               "-H", f"Authorization: Bearer {key}", "--checks", CHECKS,
               "--max-time", str(args.max_time), "--workers", args.workers, "--no-color"]
        if args.seed:
            cmd += ["--seed", args.seed]
        fuzz = subprocess.run(cmd, cwd=work)
        total, errors = metrics_counts(port)
        print(f"contract fuzzing: {total} requests served, {errors} answered 5xx, schemathesis exit {fuzz.returncode}")
        if errors or fuzz.returncode != 0 or server.poll() is not None:
            print(f"server log: {log.name}")
            sys.exit(1)
    finally:
        server.kill()
        server.wait()
    shutil.rmtree(work, ignore_errors=True)


def extra_serve_flags(binary):
    """Flags the fuzzer needs where the binary has them: no per-address
    limit on failed authentications (the fuzzer sends bad keys on purpose)."""
    help_text = subprocess.run([binary, "serve", "--help"], capture_output=True, text=True).stdout
    flags = []
    if "--auth-failures" in help_text:
        flags += ["--auth-failures", "0"]
    return flags


def wait_up(port, server):
    for _ in range(100):
        if server.poll() is not None:
            sys.exit("the server exited at start")
        try:
            if request(port, "GET", "/healthz")[0] == 200:
                return
        except OSError:
            pass
        time.sleep(0.1)
    sys.exit("the server did not come up")


if __name__ == "__main__":
    main()
