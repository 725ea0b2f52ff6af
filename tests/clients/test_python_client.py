"""The Python client openapi-python-client generates from the contract calls every operation against a real server,
with typed requests and typed answers, and its caller passes `mypy --strict`."""

from __future__ import annotations

import os
import sys

from tests.clients.conftest import (API_KEY, HERE, ContractDefect, assert_every_operation_answered, contract_defect,
                                    mypy, run)

CALLER = HERE / "python_caller.py"


def run_caller(python_client, base_url, examples_file, *key: str):
    env = {**os.environ, "PYTHONPATH": str(python_client.folder)}  # the generated package, as it comes
    return run([sys.executable, CALLER, base_url, examples_file, *key], env=env)


def test_the_generator_reports_no_warning(python_client):
    # openapi-python-client says "Warning(s) encountered while generating" when it drops an endpoint or a model
    assert "warning" not in python_client.output.lower(), python_client.output


def test_generated_client_calls_every_operation_with_a_key(python_client, keyed_server, examples_file, contract):
    done = run_caller(python_client, keyed_server.base_url, examples_file, API_KEY)
    assert_every_operation_answered(done, contract)


def test_generated_client_calls_every_operation_without_a_key_when_keys_are_off(python_client, open_server,
                                                                               examples_file, contract):
    # a plain Client, as the contract's security [{apiKey: []}, {}] allows when keys are off
    done = run_caller(python_client, open_server.base_url, examples_file)
    assert_every_operation_answered(done, contract)


def test_the_keyed_server_refuses_the_caller_without_its_key(python_client, keyed_server, examples_file):
    # the keys-on run above proves something only if the key was needed (common practice: 401 without credentials)
    done = run_caller(python_client, keyed_server.base_url, examples_file)
    assert done.returncode != 0 and "401" in done.stdout + done.stderr, done.stdout + done.stderr


def test_caller_passes_mypy_strict_with_an_authenticated_client(python_client, mypy_cache):
    done = mypy(CALLER, python_client.folder, mypy_cache, "--always-true", "KEYS_REQUIRED_BY_TYPES")
    assert done.returncode == 0, done.stdout + done.stderr


def test_caller_passes_mypy_strict_with_a_plain_client_when_keys_are_off(python_client, mypy_cache):
    done = mypy(CALLER, python_client.folder, mypy_cache, "--always-false", "KEYS_REQUIRED_BY_TYPES")
    # The root-level security's empty alternative types every call as `AuthenticatedClient | Client`.
    assert done.returncode == 0, done.stdout + done.stderr


@contract_defect("nullable enums are written as `type: [null, string]` with null in `enum`; openapi-python-client "
                 "makes three identical classes of each (…Type1, …Type2Type1, …Type3Type1); "
                 "`oneOf: [{$ref}, {type: 'null'}]` gives one")
def test_each_enum_is_one_generated_class(python_client):
    models = python_client.folder / "ampline_api_client" / "models"
    repeated = sorted(p.stem.removesuffix("_type_2_type_1") for p in models.glob("*_type_2_type_1.py"))
    if repeated:
        raise ContractDefect(f"{len(repeated)} enums generated three times each: {repeated}")
