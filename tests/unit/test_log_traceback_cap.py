"""A logged traceback is capped (issue 21, item 2): a RecursionError's traceback was 182 KB a request."""

from __future__ import annotations

import json

import structlog

from service.api.observability import MAX_LOGGED_TRACEBACK, cap_traceback, configure_logging
from service.api.settings import Settings


def _ping(n: int) -> None:
    _pong(n + 1)


def _pong(n: int) -> None:  # two functions in turn: Python's traceback cannot fold the repeats into one line
    _ping(n + 1)


def test_a_deep_traceback_is_logged_in_a_few_kilobytes(capsys):
    configure_logging(Settings(log_format="json"))
    try:
        _ping(0)
    except RecursionError as exc:
        structlog.get_logger("ampline.error").error("unhandled_exception", exc_info=exc, path="/v1/x")
    line = capsys.readouterr().out.strip().splitlines()[-1]
    record = json.loads(line)
    text = record["exception"]
    assert len(line) < MAX_LOGGED_TRACEBACK + 1024  # common practice: a log line of a few KB
    assert text.startswith("Traceback (most recent call last):")  # where it entered the code
    assert text.rstrip().endswith("RecursionError: maximum recursion depth exceeded")  # what was raised
    assert "characters of traceback left out" in text
    assert record["event"] == "unhandled_exception" and record["path"] == "/v1/x"


def test_a_short_traceback_is_logged_whole():
    event = {"event": "x", "exception": "Traceback (most recent call last):\n  ...\nValueError: no"}
    assert cap_traceback(None, "error", dict(event)) == event
