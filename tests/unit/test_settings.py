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


def test_header_timeout_and_connection_cap_are_read_and_bounded():
    # common practice: a header-read timeout and a connection cap must be positive and finite to bound anything
    s = Settings.from_env({"AMPLINE_HEADER_TIMEOUT_S": "2.5", "AMPLINE_MAX_CONNECTIONS": "64"})
    assert (s.header_timeout_s, s.max_connections) == (2.5, 64)
    for name, value in (("HEADER_TIMEOUT_S", "0"), ("HEADER_TIMEOUT_S", "301"), ("HEADER_TIMEOUT_S", "-1"),
                        ("MAX_CONNECTIONS", "0"), ("MAX_CONNECTIONS", "100001")):
        with pytest.raises(ValueError, match=f"AMPLINE_{name}"):
            Settings.from_env({f"AMPLINE_{name}": value})


# --------------------------------------------------------------------------- issue 21, item 8: fail closed

import ast  # noqa: E402
from pathlib import Path  # noqa: E402

from service.api.settings import BOUNDS  # noqa: E402

ROOT = Path(__file__).resolve().parents[2]
KEYED = {"AMPLINE_API_KEY_HASHES": "quoting=" + "ab" * 32}


def _field_docs() -> dict[str, str]:
    """The docstring under each Settings field, read from the source (attribute docstrings are not kept)."""
    tree = ast.parse((ROOT / "service" / "api" / "settings.py").read_text(encoding="utf-8"))
    (cls,) = [n for n in tree.body if isinstance(n, ast.ClassDef) and n.name == "Settings"]
    docs, name = {}, None
    for node in cls.body:
        if isinstance(node, ast.AnnAssign):
            name = node.target.id
        elif isinstance(node, ast.Expr) and isinstance(node.value, ast.Constant) and name:
            docs[name] = " ".join(node.value.value.split())
            name = None
    return docs


def test_every_numeric_setting_has_bounds_stated_in_its_doc_and_the_readme():
    from dataclasses import fields

    numeric = {f.name for f in fields(Settings) if f.type in ("int", "float")}
    assert numeric == set(BOUNDS), f"without bounds: {sorted(numeric - set(BOUNDS))}"
    docs = _field_docs()
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    for name, bounds in BOUNDS.items():
        stated = f"Range: {bounds.text()}."
        assert stated in docs[name], f"Settings.{name} docstring should say {stated!r}"
        (row,) = [line for line in readme.splitlines() if line.startswith(f"| `AMPLINE_{name.upper()}` |")]
        assert f"range {bounds.text()}" in row, f"README row of AMPLINE_{name.upper()} should say the range"


@pytest.mark.parametrize("name", sorted(BOUNDS))
def test_a_value_past_either_bound_stops_start_up(name):
    bounds = BOUNDS[name]
    step = 1 if isinstance(getattr(Settings(), name), int) else 1e-3 * max(bounds.high, 1e-6)
    above = bounds.high + step
    below = bounds.low if bounds.low_exclusive else bounds.low - step
    for value in (above, below):
        with pytest.raises(ValueError, match=f"AMPLINE_{name.upper()}"):
            Settings.from_env({f"AMPLINE_{name.upper()}": str(value)})
    Settings.from_env({f"AMPLINE_{name.upper()}": str(bounds.high)})  # the bound itself is accepted


@pytest.mark.parametrize("env", [
    {"AMPLINE_COMPUTE_THREADS": "100000"},  # issue 21: accepted before
    {"AMPLINE_MAX_BODY_BYTES": "100000000000000"},  # issue 21: a 10^14-byte body limit was accepted
])
def test_the_values_the_probe_found_are_refused(env):
    with pytest.raises(ValueError):
        Settings.from_env(env)


@pytest.mark.parametrize("origins", ["*", "https://a.example.org,", "https://a.example.org,,https://b.example.org",
                                     "a.example.org", "https://a.example.org/", "https://a.example.org/app",
                                     "ftp://a.example.org", "https://*.example.org", "null", "https://a b.org",
                                     "https://a.example.org:99999", "https://user@a.example.org"])
def test_cors_refuses_wildcards_empty_entries_and_what_is_not_an_origin(origins):
    # RFC 6454 section 7.1: an origin is scheme "://" host [":" port], nothing after
    with pytest.raises(ValueError, match="CORS_ALLOW_ORIGINS"):
        Settings.from_env({"AMPLINE_CORS_ALLOW_ORIGINS": origins})


def test_cors_accepts_origins():
    value = "https://quotes.example.org, http://localhost:3000,https://[2001:db8::1]:8443"
    assert Settings.from_env({"AMPLINE_CORS_ALLOW_ORIGINS": value}).cors_allow_origins == value


@pytest.mark.parametrize("proxies", ["*", "10.0.0.1,", "10.0.0.1,,10.0.0.2", "proxy.internal", "10.0.0.300",
                                     "10.0.0.1/8", "10.0.0.0/33", "127.0.0.1 10.0.0.1"])
def test_trusted_proxies_must_be_ip_addresses_or_networks(proxies):
    # Python ipaddress: 10.0.0.1/8 has host bits set, so it is no network (uvicorn would never match it)
    with pytest.raises(ValueError, match="FORWARDED_ALLOW_IPS"):
        Settings.from_env({"AMPLINE_FORWARDED_ALLOW_IPS": proxies})


def test_no_proxy_is_trusted_by_default_and_named_ones_are_accepted():
    assert Settings.from_env({}).forwarded_allow_ips == ""
    value = "10.0.0.5, 10.1.0.0/16,::1,fd00::/8"
    assert Settings.from_env({"AMPLINE_FORWARDED_ALLOW_IPS": value}).forwarded_allow_ips == value


@pytest.mark.parametrize("host", ["0.0.0.0", "::", "192.0.2.10", "ampline.internal"])
def test_a_non_loopback_address_with_keys_off_stops_start_up_unless_anonymous_is_meant(host):
    with pytest.raises(ValueError, match="API keys are off"):
        Settings.from_env({"AMPLINE_HOST": host})
    assert Settings.from_env({"AMPLINE_HOST": host, **KEYED}).host == host
    assert Settings.from_env({"AMPLINE_HOST": host, "AMPLINE_API_KEY_HASHES_FILE": "/run/secrets/k"}).host == host
    assert Settings.from_env({"AMPLINE_HOST": host, "AMPLINE_ALLOW_ANONYMOUS": "true"}).allow_anonymous


@pytest.mark.parametrize("host", ["127.0.0.1", "127.0.0.2", "::1", "localhost"])
def test_loopback_needs_no_keys(host):
    assert Settings.from_env({"AMPLINE_HOST": host}).host == host


@pytest.mark.parametrize("value", ["max-age=31536000\r\nX-Evil: 1", "max-age=", "max-age=1y",
                                   "max-age=300; report-uri=x", "max-age=31536000;includeSubDomains,"])
def test_strict_transport_security_is_the_header_rfc_6797_defines_and_nothing_more(value):
    # RFC 6797, section 6.1: max-age=<delta-seconds> [; includeSubDomains] (preload: a browsers' list convention)
    with pytest.raises(ValueError, match="STRICT_TRANSPORT_SECURITY"):
        Settings.from_env({"AMPLINE_STRICT_TRANSPORT_SECURITY": value})


@pytest.mark.parametrize("value", ["max-age=31536000", "max-age=31536000; includeSubDomains",
                                   "max-age=63072000; includeSubDomains; preload"])
def test_strict_transport_security_accepts_its_forms(value):
    assert Settings.from_env({"AMPLINE_STRICT_TRANSPORT_SECURITY": value}).strict_transport_security == value


@pytest.mark.parametrize("host", ["", " ", "0.0.0.0 ", "local host", "-bad.example", "[::1]", "10.0.0.1:8000"])
def test_a_host_that_is_no_address_or_host_name_stops_start_up(host):
    # RFC 1123, section 2.1 (host names); Python ipaddress (literals)
    with pytest.raises(ValueError, match="AMPLINE_HOST"):
        Settings.from_env({"AMPLINE_HOST": host, "AMPLINE_ALLOW_ANONYMOUS": "true"})


def test_factor_memory_budget_is_bounded():
    """Default well under the Kubernetes memory limit of deploy/kubernetes (1 Gi): common practice, leave room for
    the process itself and SuperLU's working memory."""
    assert Settings().network_factor_max_bytes <= 512 * 2**20
    assert Settings.from_env({"AMPLINE_NETWORK_FACTOR_MAX_BYTES": "1048576"}).network_factor_max_bytes == 2**20
    for bad in ("1000", "0", "100000000000000"):
        with pytest.raises(ValueError, match="NETWORK_FACTOR_MAX_BYTES"):
            Settings.from_env({"AMPLINE_NETWORK_FACTOR_MAX_BYTES": bad})
