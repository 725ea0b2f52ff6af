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


def _read_until_closed(sock: socket.socket) -> bytes:
    reply = b""
    try:
        while chunk := sock.recv(65_536):
            reply += chunk
    except OSError:  # a reset or the socket timeout: what arrived is the answer
        pass
    return reply


def _trickle_headers(sock: socket.socket, for_s: float = 8) -> tuple[bytes, float]:
    """Send a request line, then one header line every 0.2 s and never the blank line; (reply, seconds until the
    server cut the connection off, or for_s when it never did)."""
    sock.sendall(b"GET /v1/meta HTTP/1.1\r\nHost: x\r\n")
    started = time.monotonic()
    try:
        while time.monotonic() - started < for_s:
            sock.sendall(b"X-Slow: 1\r\n")
            time.sleep(0.2)
    except OSError:
        pass  # cut off by the server
    else:
        return b"", for_s
    return _read_until_closed(sock), time.monotonic() - started


def test_headers_sent_too_slowly_are_cut_off_and_the_server_keeps_serving():
    # Slowloris: RFC 9110, 15.5.9 (408 when a complete request did not arrive in time, then close).
    server = start_server(header_timeout_s="1")
    try:
        port = _port(server)
        with socket.create_connection(("127.0.0.1", port), timeout=10) as sock:
            reply, waited = _trickle_headers(sock)
        assert waited < 6, f"a client trickling header bytes kept its connection for {waited:.1f} s"
        assert reply.startswith(b"HTTP/1.1 408 ") or reply == b"", reply[:200]
        if reply:
            assert b"application/problem+json" in reply and b"header-timeout" in reply

        # A connection that sends nothing at all is closed too (silently: there was no request to answer).
        with socket.create_connection(("127.0.0.1", port), timeout=10) as sock:
            started = time.monotonic()
            assert _read_until_closed(sock) == b""
            assert 0.5 < time.monotonic() - started < 5

        # On a kept-alive connection the next request's headers get the same time, from their first byte.
        with socket.create_connection(("127.0.0.1", port), timeout=10) as sock:
            sock.sendall(b"GET /healthz HTTP/1.1\r\nHost: x\r\n\r\n")
            first = b""
            while not first.endswith(b'{"status":"ok"}'):  # the head and the body may come in separate segments
                first += sock.recv(65_536)
            assert first.startswith(b"HTTP/1.1 200 ")
            reply, waited = _trickle_headers(sock)
            assert waited < 6, waited
            assert reply.startswith(b"HTTP/1.1 408 ") or reply == b"", reply[:200]

        # The probe's shape: 50 connections trickling header bytes at once are all cut off, not held.
        slow = [socket.create_connection(("127.0.0.1", port), timeout=10) for _ in range(50)]
        try:
            for sock in slow:
                sock.sendall(b"GET /v1/meta HTTP/1.1\r\nHost: x\r\n")
            started, open_ = time.monotonic(), set(range(50))
            while open_ and time.monotonic() - started < 8:
                for i in list(open_):
                    try:
                        slow[i].sendall(b"X-Slow: 1\r\n")
                    except OSError:
                        open_.discard(i)
                time.sleep(0.2)
            assert not open_, f"{len(open_)} of 50 header tricklers still open after 8 s"
            assert time.monotonic() - started < 6
        finally:
            for sock in slow:
                sock.close()

        assert httpx.get(server.base_url + "/healthz").status_code == 200
    finally:
        assert server.stop() in CLEAN_EXITS


def test_a_request_beyond_the_connection_cap_gets_503_and_the_cap_frees_up():
    # common practice: a server bounds its concurrent connections and answers 503 past the bound
    # (RFC 9110, 15.6.4: 503, the server is temporarily overloaded).
    server = start_server(max_connections="4")
    try:
        idle = [socket.create_connection(("127.0.0.1", _port(server)), timeout=10) for _ in range(3)]
        try:
            time.sleep(0.3)  # let the server accept them
            with socket.create_connection(("127.0.0.1", _port(server)), timeout=10) as sock:
                sock.sendall(b"GET /healthz HTTP/1.1\r\nHost: x\r\n\r\n")
                reply = _read_until_closed(sock)
            assert reply.startswith(b"HTTP/1.1 503 "), reply[:200]
            assert b"application/problem+json" in reply and b"server-busy" in reply and b"retry-after: 1" in reply
        finally:
            for sock in idle:
                sock.close()
        time.sleep(0.3)
        assert httpx.get(server.base_url + "/healthz").status_code == 200
    finally:
        assert server.stop() in CLEAN_EXITS


def test_content_length_with_transfer_encoding_is_refused_and_nothing_after_it_answered(live_server):
    # RFC 9112, 6.3, item 3: a message with both may be refused (400) or the connection closed after it,
    # so that a request smuggled behind it in the same packet is never answered.
    body = b'{"size": "1.5 mm^2", "length": "18 m"}'
    smuggled = (b"POST /v1/conductors/resistance HTTP/1.1\r\nHost: x\r\ncontent-type: application/json\r\n"
                b"content-length: 5\r\ntransfer-encoding: chunked\r\n\r\n"
                + f"{len(body):x}\r\n".encode() + body + b"\r\n0\r\n\r\n"
                + b"GET /healthz HTTP/1.1\r\nHost: x\r\n\r\n")
    with socket.create_connection(("127.0.0.1", _port(live_server)), timeout=5) as sock:
        sock.sendall(smuggled)
        reply = _read_until_closed(sock)
    assert reply.startswith(b"HTTP/1.1 400 "), reply[:200]
    assert reply.count(b"HTTP/1.1 ") == 1, reply  # the second request got no answer: the connection was closed
    assert httpx.get(live_server.base_url + "/healthz").status_code == 200


# --------------------------------------------------------------------------- issue 21, item 7: X-Forwarded-For

def _rotating(base: str, n: int, **headers: str) -> list[int]:
    """n requests from this (loopback) client, each claiming another client address."""
    with httpx.Client(base_url=base) as c:
        return [c.get("/v1/meta", headers={"x-forwarded-for": f"198.51.100.{i % 250 + 1}", **headers}).status_code
                for i in range(n)]


def test_with_default_settings_rotating_x_forwarded_for_does_not_escape_the_rate_limit():
    # issue 21: loopback was trusted as a proxy by default, so a local caller rotating the header never met
    # the limit. No proxy is trusted unless named (AMPLINE_FORWARDED_ALLOW_IPS).
    server = start_server(rate_limit_requests="3")
    try:
        assert _rotating(server.base_url, 6) == [200, 200, 200, 429, 429, 429]
    finally:
        assert server.stop() in CLEAN_EXITS


def test_with_default_settings_key_guesses_meet_429_whatever_x_forwarded_for_says():
    # issue 21: 100 key guesses got 100 x 403 and no 429
    server = start_server(api_key_hashes=f"quoting={hash_key(KEY)}")
    try:
        answers = _rotating(server.base_url, 100, authorization="Bearer wrong-guess")
        assert 403 in answers and answers[-1] == 429 and answers.count(403) <= 20  # AMPLINE_AUTH_FAILURE_LIMIT
    finally:
        assert server.stop() in CLEAN_EXITS


def test_a_named_proxy_is_believed():
    server = start_server(rate_limit_requests="3", forwarded_allow_ips="127.0.0.1")
    try:  # each claimed client has its own allowance: the operator said loopback is their proxy
        assert set(_rotating(server.base_url, 6)) == {200}
    finally:
        assert server.stop() in CLEAN_EXITS


def test_a_public_address_with_keys_off_does_not_start():
    try:
        server = start_server(host="0.0.0.0")
    except RuntimeError as refused:
        assert "API keys are off" in str(refused)
    else:
        server.stop()
        pytest.fail("the server served on 0.0.0.0 with keys off")


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
