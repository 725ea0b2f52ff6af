"""Hardening that only a real server shows: slow bodies, oversized headers, keys kept out of its output."""

from __future__ import annotations

import socket
import time

import httpx
import pytest

from service.api.keys import hash_key
from tests.e2e.conftest import CLEAN_EXITS, start_server

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
