"""Hardening that only a real server shows: slow bodies, oversized headers, keys kept out of its output."""

from __future__ import annotations

import json
import os
import shutil
import socket
import subprocess
import sys
import time
from pathlib import Path

import httpx
import pytest

from service.api.keys import hash_key
from tests.e2e.conftest import CLEAN_EXITS, ROOT, free_port, start_server

KEY = "real-server-key-5b1e0c7d93"


def _port(server) -> int:
    return int(server.base_url.rsplit(":", 1)[1])


def test_a_body_sent_too_slowly_gets_408_and_the_server_keeps_serving():
    server = start_server(body_timeout_s="1")
    try:
        with socket.create_connection(("127.0.0.1", _port(server)), timeout=10) as sock:
            sock.sendall(b"POST /v1/conductors/resistance HTTP/1.1\r\nHost: x\r\ncontent-type: application/json\r\n"
                         b"content-length: 100\r\n\r\n{\"size\"")
            started = time.monotonic()
            reply = sock.recv(4096)
            waited = time.monotonic() - started
            while chunk := sock.recv(4096):  # the body may come in a later segment; the server then closes
                reply += chunk
        assert reply.startswith(b"HTTP/1.1 408 "), reply[:200]
        assert b"application/problem+json" in reply and b"body-timeout" in reply
        assert 0.5 < waited < 5
        assert httpx.get(server.base_url + "/healthz").status_code == 200
    finally:
        assert server.stop() in CLEAN_EXITS


def test_a_header_block_that_never_ends_is_cut_off_not_buffered():
    server = start_server(max_header_bytes="16384")
    try:
        sent, reply = 0, b""
        with socket.create_connection(("127.0.0.1", _port(server)), timeout=10) as sock:
            sock.sendall(b"GET /v1/meta HTTP/1.1\r\nHost: x\r\nX-Big: ")
            try:
                while sent < 50_000_000:
                    sock.sendall(b"h" * 65_536)
                    sent += 65_536
                    time.sleep(0.001)  # arrives in pieces, as a slow or hostile client sends it
            except OSError:
                pass  # closed by the server
            try:
                reply = sock.recv(4096)
            except OSError:
                reply = b""
        assert sent < 5_000_000, f"the server took {sent} header bytes without refusing"
        assert reply.startswith(b"HTTP/1.1 400 ") or reply == b"", reply[:200]
        assert httpx.get(server.base_url + "/v1/meta", headers={"x-fine": "h" * 4000}).status_code == 200
    finally:
        assert server.stop() in CLEAN_EXITS


def test_with_keys_on_the_server_output_never_holds_a_key():
    server = start_server(api_key_hashes=f"quoting={hash_key(KEY)}", log_level="debug")
    try:
        base = server.base_url
        ok = httpx.post(base + "/v1/conductors/resistance", json={"size": "1.5 mm^2", "length": "18 m"},
                        headers={"authorization": f"Bearer {KEY}"})
        assert ok.status_code == 200
        for key in (KEY + "0", KEY[:-3]):
            assert httpx.get(base + "/v1/meta", headers={"authorization": f"Bearer {key}"}).status_code == 403
        assert httpx.get(base + f"/v1/{KEY}", headers={"authorization": f"Bearer {KEY}"}).status_code == 404
        headers = ok.headers
        assert "server" not in headers and headers["x-content-type-options"] == "nosniff"
    finally:
        assert server.stop() in CLEAN_EXITS
    output = server.output()
    assert '"caller": "key:quoting"' in output and '"status": 403' in output  # the lines are there...
    assert KEY[:10] not in output  # ...without the key


def _source_tree_with(tmp_path: Path, edit, regenerate_manifest: bool) -> Path:
    """A copy of the service's source tree with one table file edited (the real tree is never touched)."""
    shutil.copytree(ROOT / "service", tmp_path / "service", ignore=shutil.ignore_patterns("__pycache__"))
    table = tmp_path / "service" / "core" / "data" / "iec60228_table3_class5.json"
    table.write_text(edit(table.read_text(encoding="utf-8")), encoding="utf-8")
    if regenerate_manifest:
        subprocess.run([sys.executable, "-m", "service.core.data.manifest", "--write"], cwd=tmp_path, check=True,
                       capture_output=True, timeout=60)
    return tmp_path


@pytest.mark.parametrize(("edit", "regenerate_manifest", "named"), [
    # issue 21, item 9: 7.98 ohm/km (IEC 60228:2004, Table 3, 2.5 mm2 class 5 plain copper) typed as 7.0
    (lambda text: text.replace("7.98", "7.0"), False, "iec60228_table3_class5.json: differs from its SHA-256"),
    # a shape defect the manifest was regenerated over: the loader's own checks still stop start-up
    (lambda text: text.replace('"rows": [', '"rows": [["x"], ', 1), True,
     "iec60228_table3_class5.json: row 0 has the wrong length"),
], ids=["edited-value", "broken-shape"])
def test_a_defective_table_stops_start_up_with_one_json_line_naming_the_file(tmp_path, edit, regenerate_manifest,
                                                                             named):
    tree = _source_tree_with(tmp_path, edit, regenerate_manifest)
    env = {**os.environ, "AMPLINE_HOST": "127.0.0.1", "AMPLINE_PORT": str(free_port()), "AMPLINE_LOG_FORMAT": "json"}
    done = subprocess.run([sys.executable, "-m", "service"], cwd=tree, env=env, capture_output=True, text=True,
                          timeout=60)
    assert done.returncode == 1
    assert "Traceback" not in done.stdout + done.stderr and done.stderr == ""
    lines = done.stdout.splitlines()
    assert len(lines) == 1, done.stdout
    record = json.loads(lines[0])
    assert record["event"] == "startup_refused" and record["level"] == "critical"
    assert named in record["detail"]
