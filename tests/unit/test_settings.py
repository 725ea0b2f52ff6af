"""Settings come from AMPLINE_* environment variables, checked once."""

from __future__ import annotations

import pytest

from service.api.settings import Settings


def test_defaults_are_the_documented_ones():
    s = Settings.from_env({})
    assert (s.host, s.port, s.log_level, s.log_format, s.max_body_bytes) == ("127.0.0.1", 8000, "info", "json", 1_048_576)


def test_environment_overrides_and_integer_parsing():
    s = Settings.from_env({"AMPLINE_PORT": "9001", "AMPLINE_LOG_FORMAT": "console", "AMPLINE_MAX_BODY_BYTES": "4096"})
    assert (s.port, s.log_format, s.max_body_bytes) == (9001, "console", 4096)


@pytest.mark.parametrize(
    "env",
    [{"AMPLINE_PORT": "0"}, {"AMPLINE_PORT": "eighty"}, {"AMPLINE_LOG_FORMAT": "xml"},
     {"AMPLINE_LOG_LEVEL": "chatty"}, {"AMPLINE_MAX_BODY_BYTES": "10"}, {"AMPLINE_WORKERS": "0"},
     {"AMPLINE_COMPUTE_DEADLINE_S": "0"}, {"AMPLINE_COMPUTE_DEADLINE_S": "nan"}, {"AMPLINE_COMPUTE_DEADLINE_S": "soon"},
     {"AMPLINE_BODY_TIMEOUT_S": "-1"}, {"AMPLINE_COMPUTE_THREADS": "0"}, {"AMPLINE_MAX_CHAIN_LEADS": "0"},
     {"AMPLINE_RATE_LIMIT_REQUESTS": "-5"}, {"AMPLINE_RATE_LIMIT_WINDOW_S": "0"},
     {"AMPLINE_STRICT_TRANSPORT_SECURITY": "includeSubDomains"}, {"AMPLINE_METRICS_REQUIRE_KEY": "perhaps"}],
)
def test_bad_settings_stop_start_up(env):
    with pytest.raises(ValueError):
        Settings.from_env(env)


def test_decimal_seconds_are_read_as_numbers():
    s = Settings.from_env({"AMPLINE_COMPUTE_DEADLINE_S": "2.5", "AMPLINE_BODY_TIMEOUT_S": "3"})
    assert (s.compute_deadline_s, s.body_timeout_s) == (2.5, 3.0)


def test_readme_settings_table_lists_every_setting_with_its_default():
    from dataclasses import fields
    from pathlib import Path

    readme = (Path(__file__).resolve().parents[2] / "README.md").read_text(encoding="utf-8")
    for f in fields(Settings):
        default = f"`{f.default}`" if f.default != "" else "(empty)"
        row = f"| `AMPLINE_{f.name.upper()}` | {default} |"
        assert row in readme, f"README settings table: missing or stale row for AMPLINE_{f.name.upper()}"


def test_impedance_form_ratio_is_bounded():
    assert Settings.from_env({"AMPLINE_NETWORK_IMPEDANCE_FORM_RATIO": "0"}).network_impedance_form_ratio == 0.0
    with pytest.raises(ValueError, match="IMPEDANCE_FORM_RATIO"):
        Settings.from_env({"AMPLINE_NETWORK_IMPEDANCE_FORM_RATIO": "0.5"})


def test_factor_memory_budget_is_bounded():
    """Default well under the Kubernetes memory limit of deploy/kubernetes (1 Gi): common practice, leave room for
    the process itself and SuperLU's working memory."""
    assert Settings().network_factor_max_bytes <= 512 * 2**20
    assert Settings.from_env({"AMPLINE_NETWORK_FACTOR_MAX_BYTES": "1048576"}).network_factor_max_bytes == 2**20
    for bad in ("1000", "0", "100000000000000"):
        with pytest.raises(ValueError, match="NETWORK_FACTOR_MAX_BYTES"):
            Settings.from_env({"AMPLINE_NETWORK_FACTOR_MAX_BYTES": bad})
