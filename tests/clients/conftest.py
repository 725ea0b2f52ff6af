"""The committed contract as a client programmer meets it: generators from the package registries, no hand edits.

Tools come from `make install-test` (client-test-deps): openapi-python-client in .venv-generators, the npm tools in
tests/clients/node/node_modules. Without them these tests are skipped, except under AMPLINE_REQUIRE_CLIENT_TOOLS=1
(`make test`), where a missing tool fails. Generated code goes to pytest's temporary folders only.

A check that cannot pass until the contract itself is fixed raises `ContractDefect` and is marked
`xfail(strict=True, raises=ContractDefect)`: any other failure (a tool that did not run, a server that answered
wrongly) still fails the test, and once the contract is fixed the strict mark turns the pass into a failure to notice.
"""

from __future__ import annotations

import json
import os
import re
import shutil
import subprocess
import sys
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import pytest
import yaml

from service.api.keys import hash_key
from tests.clients.readme_snippets import readme_snippet
from tests.e2e.conftest import LiveServer, start_server

ROOT = Path(__file__).resolve().parents[2]
HERE = ROOT / "tests" / "clients"
CONTRACT = ROOT / "openapi" / "v1" / "openapi.yaml"
NODE_DIR = HERE / "node"
NODE_BIN = NODE_DIR / "node_modules" / ".bin"
GENERATORS_BIN = ROOT / ".venv-generators" / "bin"
API_KEY = "quote-desk-client-test-key-5e81c0"  # a test key of our own; the server gets only its hash
REQUIRED = os.environ.get("AMPLINE_REQUIRE_CLIENT_TOOLS") == "1"


class ContractDefect(AssertionError):
    """A generator or linter found a defect in the contract as committed (not in the harness)."""


def contract_defect(marker_reason: str) -> pytest.MarkDecorator:
    return pytest.mark.xfail(strict=True, raises=ContractDefect, reason=f"contract: {marker_reason}")


def tool(path: Path) -> Path:
    """A tool's executable, or a skip (a failure under AMPLINE_REQUIRE_CLIENT_TOOLS=1) when it is not installed."""
    if path.exists():
        return path
    message = f"{path.relative_to(ROOT)} is missing: run `make client-test-deps`"
    if REQUIRED:
        pytest.fail(message)
    pytest.skip(message)


def node() -> str:
    found = shutil.which("node")
    if found is None:
        if REQUIRED:
            pytest.fail("node is not on PATH: run `make client-test-deps`")
        pytest.skip("node is not on PATH")
    return found


def run(args: list[str | Path], *, timeout_s: float = 120, **kwargs: Any) -> subprocess.CompletedProcess[str]:
    return subprocess.run([str(a) for a in args], capture_output=True, text=True, timeout=timeout_s, **kwargs)


@dataclass(frozen=True)
class Generated:
    """Generated code in a temporary folder, and what the generator printed (its timing: load_tests/bench_clients.py)."""

    folder: Path
    output: str


def operation_ids(contract: dict[str, Any]) -> list[str]:
    return [op["operationId"] for ops in contract["paths"].values() for op in ops.values()]


def assert_every_operation_answered(done: subprocess.CompletedProcess[str], contract: dict[str, Any]) -> None:
    """A caller's run: exit 0, an `ok <operationId>` line for every operation of the contract, and the 422."""
    output = done.stdout + done.stderr
    assert done.returncode == 0, output
    answered = set(re.findall(r"^ok ([\w-]+)", done.stdout, flags=re.M))
    missing = set(operation_ids(contract)) - answered
    assert not missing, f"operations the caller did not call: {sorted(missing)}\n{output}"
    assert "problem-422" in answered  # the refusal, read as the typed problem


@pytest.fixture(scope="session")
def contract() -> dict[str, Any]:
    return yaml.safe_load(CONTRACT.read_text(encoding="utf-8"))


@pytest.fixture(scope="session")
def examples_file(contract: dict[str, Any], tmp_path_factory: pytest.TempPathFactory) -> Path:
    """The first request example of each operation that takes a body, by operationId, read from the contract."""
    examples = {}
    for ops in contract["paths"].values():
        for op in ops.values():
            media = op.get("requestBody", {}).get("content", {}).get("application/json", {})
            if media.get("examples"):
                examples[op["operationId"]] = next(iter(media["examples"].values()))["value"]
    path = tmp_path_factory.mktemp("examples") / "request_examples.json"
    path.write_text(json.dumps(examples), encoding="utf-8")
    return path


def serving(**settings: str) -> Iterator[LiveServer]:
    server = start_server(**settings)
    try:
        yield server
    finally:
        server.stop()


@pytest.fixture(scope="session")
def keyed_server() -> Iterator[LiveServer]:
    yield from serving(api_key_hashes=f"clients={hash_key(API_KEY)}")


@pytest.fixture(scope="session")
def open_server() -> Iterator[LiveServer]:
    yield from serving()


@pytest.fixture(scope="session")
def python_client(tmp_path_factory: pytest.TempPathFactory) -> Generated:
    """openapi-python-client's package for the contract, generated as it comes (no config, no edits)."""
    generator = tool(GENERATORS_BIN / "openapi-python-client")
    folder = tmp_path_factory.mktemp("python-client") / "ampline-api-client"
    env = {**os.environ, "PATH": f"{GENERATORS_BIN}{os.pathsep}{os.environ['PATH']}"}  # its ruff post-hook
    done = run([generator, "generate", "--path", CONTRACT, "--output-path", folder], env=env)
    output = done.stdout + done.stderr
    assert done.returncode == 0 and (folder / "ampline_api_client").is_dir(), output
    return Generated(folder, output)


@dataclass(frozen=True)
class TypeScriptBuild:
    folder: Path
    errors: list[str]  # tsc's diagnostics, "file(line,col): error TS...: ..."


README_TS = "readme_example.ts"


@pytest.fixture(scope="session")
def typescript_build(tmp_path_factory: pytest.TempPathFactory) -> TypeScriptBuild:
    """schema.d.ts from openapi-typescript, and caller.ts, typed_answers.ts and the README's TypeScript example
    compiled together by `tsc --strict` (one compile: each file's errors are read apart)."""
    node()
    generator, tsc = tool(NODE_BIN / "openapi-typescript"), tool(NODE_BIN / "tsc")
    folder = tmp_path_factory.mktemp("typescript-client")
    done = run([generator, CONTRACT, "-o", folder / "schema.d.ts"])
    assert done.returncode == 0, done.stdout + done.stderr
    for name in ("caller.ts", "typed_answers.ts"):
        shutil.copy(NODE_DIR / name, folder / name)
    (folder / README_TS).write_text(readme_snippet("typescript"), encoding="utf-8")
    (folder / "package.json").write_text('{"type": "module"}\n', encoding="utf-8")
    (folder / "node_modules").symlink_to(NODE_DIR / "node_modules", target_is_directory=True)
    compiled = run([tsc, "--strict", "--noEmit", "false", "--pretty", "false", "--module", "nodenext",
                    "--moduleResolution", "nodenext", "--target", "es2022", "--types", "node", "--outDir", "out",
                    "caller.ts", "typed_answers.ts", README_TS], cwd=folder, timeout_s=300)
    errors = [line for line in compiled.stdout.splitlines() if ": error TS" in line]
    assert compiled.returncode == 0 or errors, compiled.stdout + compiled.stderr  # tsc ran and said why
    return TypeScriptBuild(folder, errors)


@pytest.fixture(scope="session")
def mypy_cache(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """One mypy cache for the session: the generated package is checked once, not once per caller."""
    return tmp_path_factory.mktemp("mypy-cache")


def errors_in(build: TypeScriptBuild, file_name: str) -> list[str]:
    return [e for e in build.errors if e.startswith(f"{file_name}(")]


def mypy(target: Path, generated: Path, cache: Path, *flags: str) -> subprocess.CompletedProcess[str]:
    """`mypy --strict` on a caller, the generated package found through MYPYPATH (and checked strictly too)."""
    env = {**os.environ, "MYPYPATH": str(generated)}
    return run([sys.executable, "-m", "mypy", "--strict", "--cache-dir", cache, "--no-error-summary", *flags, target],
               env=env, timeout_s=300)
