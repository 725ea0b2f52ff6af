"""deploy/compose.yaml: the office-network set-up, checked against the service and the image.

`docker compose` itself cannot run here (no container engine), but its configuration check needs none:
Debian's docker-compose package (installed by `make test`, see the Makefile's system-deploy-deps) parses
the file against the Compose schema with `config`.  The tests below check what a schema cannot: that the
settings are the service's, the port is the one it listens on, and the stop grace period covers the drain.
"""

from __future__ import annotations

import re
import shutil
import subprocess
from dataclasses import fields
from pathlib import Path

import pytest
import yaml

from service.api.settings import PREFIX, Settings

ROOT = Path(__file__).resolve().parents[2]
COMPOSE = ROOT / "deploy" / "compose.yaml"


@pytest.fixture(scope="module")
def service() -> dict:
    document = yaml.safe_load(COMPOSE.read_text(encoding="utf-8"))
    (svc,) = document["services"].values()
    return svc


def _seconds(text: str) -> float:
    m = re.fullmatch(r"(\d+(?:\.\d+)?)(ms|s|m)", text)
    assert m, text
    return float(m[1]) * {"ms": 0.001, "s": 1, "m": 60}[m[2]]


def test_compose_config_accepts_the_file():
    exe = shutil.which("docker-compose")
    if exe is None:
        pytest.skip("docker-compose (Debian package) is not installed; `make test` installs it")
    done = subprocess.run([exe, "-f", str(COMPOSE), "config", "--quiet"], capture_output=True, text=True,
                          timeout=120, cwd=COMPOSE.parent)
    assert done.returncode == 0, done.stdout + done.stderr


def test_compose_config_is_not_vacuous(tmp_path):
    exe = shutil.which("docker-compose")
    if exe is None:
        pytest.skip("docker-compose (Debian package) is not installed; `make test` installs it")
    broken = tmp_path / "compose.yaml"
    broken.write_text(COMPOSE.read_text(encoding="utf-8").replace("read_only:", "readonly:"), encoding="utf-8")
    done = subprocess.run([exe, "-f", str(broken), "config", "--quiet"], capture_output=True, text=True,
                          timeout=120, cwd=tmp_path)
    assert done.returncode != 0 and "readonly" in done.stdout + done.stderr


def test_settings_are_the_services_and_it_accepts_them(service):
    env = service["environment"]
    known = {PREFIX + f.name.upper() for f in fields(Settings)}
    assert set(env) == known, f"unknown: {sorted(set(env) - known)}, not documented here: {sorted(known - set(env))}"
    settings = Settings.from_env({k: str(v) for k, v in env.items()})
    assert settings.host == "0.0.0.0"


def test_keys_are_on_from_a_secret_and_the_service_would_refuse_to_run_without_them(service):
    # issue 21, item 8: the shipped file left keys off on 0.0.0.0, reachable by anyone on the office network
    env = {k: str(v) for k, v in service["environment"].items()}
    settings = Settings.from_env(env)
    assert settings.api_key_hashes_file and not settings.allow_anonymous
    (secret,) = service["secrets"]
    assert settings.api_key_hashes_file == f"/run/secrets/{secret}"  # where Compose mounts a secret
    document = yaml.safe_load(COMPOSE.read_text(encoding="utf-8"))
    source = (COMPOSE.parent / document["secrets"][secret]["file"]).resolve()
    assert source.relative_to(ROOT).as_posix() in (ROOT / ".gitignore").read_text(encoding="utf-8").split()
    with pytest.raises(ValueError, match="API keys are off"):  # the same file with the key file taken out
        Settings.from_env({**env, "AMPLINE_API_KEY_HASHES_FILE": ""})


def test_published_port_is_the_one_the_service_listens_on(service):
    (mapping,) = service["ports"]
    container_port = int(str(mapping).rsplit(":", 1)[1])
    assert container_port == int(service["environment"]["AMPLINE_PORT"])


def test_restarts_and_health_check(service):
    assert service["restart"] in ("always", "unless-stopped")
    test = service["healthcheck"]["test"]
    assert test[0] == "CMD" and "/healthz" in " ".join(test) and "curl" not in " ".join(test)
    assert _seconds(service["healthcheck"]["timeout"]) < _seconds(service["healthcheck"]["interval"])


def test_stop_grace_period_covers_the_drain(service):
    grace = int(service["environment"]["AMPLINE_GRACEFUL_SHUTDOWN_S"])
    assert _seconds(service["stop_grace_period"]) >= grace + 5  # the engine's SIGKILL comes after the drain
    assert service.get("stop_signal", "SIGTERM") == "SIGTERM"


def test_read_only_root_with_a_tmpfs_and_no_privileges(service):
    assert service["read_only"] is True
    assert any(str(t).split(":")[0] == "/tmp" for t in service["tmpfs"])
    assert service["cap_drop"] == ["ALL"]
    assert "no-new-privileges:true" in service["security_opt"]
    assert service["user"].split(":")[0] not in ("0", "root")


def test_resource_limits(service):
    limits = service["deploy"]["resources"]["limits"]
    assert float(limits["cpus"]) > 0
    assert re.fullmatch(r"\d+[MG]", limits["memory"])
    assert service["pids_limit"] > 0


def test_builds_the_images_dockerfile(service):
    build = service["build"]
    context = (COMPOSE.parent / build["context"]).resolve()
    assert context == ROOT and (context / build["dockerfile"]).is_file()


def test_the_port_is_published_on_loopback_unless_an_address_is_chosen(service):
    # issue 16, item 8: the default "${PUBLISH_ADDRESS:-0.0.0.0}" offered the service on every interface of the
    # host, against the README's "office network only"; the office address must be chosen deliberately.
    (mapping,) = service["ports"]
    address = re.fullmatch(r"\$\{PUBLISH_ADDRESS:-(?P<default>[^}]*)\}:.*", str(mapping))
    assert address is not None, mapping
    assert address["default"] == "127.0.0.1"
