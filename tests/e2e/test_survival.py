"""The survival run with a reduced count (the full 10,000 is `make survival`; figures in docs/performance.md)."""

from __future__ import annotations

import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "load_tests"))
import survival  # noqa: E402


@pytest.mark.slow
def test_a_real_server_survives_a_thousand_hostile_requests():
    summary = survival.run(hostile=1000)
    assert summary["failures"] == [], summary
    assert summary["hostile_requests"] == 1000
    # Every kind was sent, and the valid requests in between were answered and checked.
    assert set(summary["hostile_by_kind"]) >= {"wrong-types", "huge-numbers", "deep-nesting", "unicode", "body-size",
                                              "content-type", "header-flood", "malformed-http"}
    assert summary["valid_requests"] >= 4 * 1000 // survival.VALID_EVERY and summary["valid_wrong"] == 0
    assert summary["slow_bodies"].get("408", 0) >= survival.SLOW_CONNECTIONS
    assert summary["rss_growth_pct"] < 100 * survival.MEMORY_GROWTH_LIMIT
