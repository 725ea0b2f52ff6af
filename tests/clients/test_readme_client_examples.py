"""The README's "Calling it from your code" examples, run as written against a real server (keys off, as after
`make run`): the Python one with the generated client, the TypeScript one compiled by `tsc --strict`."""

from __future__ import annotations

import os
import re
import sys

from tests.clients.conftest import README_TS, ContractDefect, contract_defect, errors_in, mypy, node, run
from tests.clients.readme_snippets import README_BASE_URL, readme_blocks, readme_snippet


def verdict_line(stdout: str, contract) -> str:
    verdicts = contract["components"]["schemas"]["SizingVerdict"]["enum"]
    assert re.match(rf"^({'|'.join(verdicts)}) \S", stdout), stdout  # "<verdict> <size>", as the example prints
    return stdout


def test_the_readme_generates_the_clients_as_ci_does():
    shell = "\n".join(readme_blocks("sh"))
    # the same generator commands tests/clients/conftest.py runs (paths aside)
    assert "openapi-python-client generate --path openapi/v1/openapi.yaml --output-path" in shell
    assert "openapi-typescript openapi/v1/openapi.yaml -o schema.d.ts" in shell


def test_readme_python_example_runs(python_client, open_server, contract, tmp_path):
    script = tmp_path / "readme_example.py"
    script.write_text(readme_snippet("python").replace(README_BASE_URL, open_server.base_url), encoding="utf-8")
    done = run([sys.executable, script], env={**os.environ, "PYTHONPATH": str(python_client.folder)})
    assert done.returncode == 0, done.stdout + done.stderr
    verdict_line(done.stdout, contract)


def test_readme_python_example_passes_mypy_strict(python_client, mypy_cache, tmp_path):
    script = tmp_path / "readme_example.py"
    script.write_text(readme_snippet("python"), encoding="utf-8")
    done = mypy(script, python_client.folder, mypy_cache)
    assert done.returncode == 0, done.stdout + done.stderr


def test_readme_typescript_example_compiles_and_runs(typescript_build, open_server, contract):
    errors = errors_in(typescript_build, README_TS)
    assert not errors, "\n".join(errors)
    compiled = typescript_build.folder / "out" / README_TS.replace(".ts", ".js")
    runnable = compiled.with_name("readme_example_live.js")
    runnable.write_text(compiled.read_text(encoding="utf-8").replace(README_BASE_URL, open_server.base_url),
                        encoding="utf-8")
    done = run([node(), runnable], cwd=typescript_build.folder)
    assert done.returncode == 0, done.stdout + done.stderr
    verdict_line(done.stdout, contract)
