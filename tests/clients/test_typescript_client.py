"""The types openapi-typescript generates from the contract, with openapi-fetch: caller.ts compiles under
`tsc --strict`, runs with node against a real server and calls every operation; typed_answers.ts states what a
caller should be able to rely on in those types, one check a line."""

from __future__ import annotations

import os
import re

import pytest

from tests.clients.conftest import (API_KEY, NODE_DIR, ContractDefect, assert_every_operation_answered, contract_defect,
                                    errors_in, node, run)

# typed_answers.ts: each check line ends with `// check: <name>`; the contract defect each stood for (None once
# fixed: the check then simply has to compile).
TYPED_ANSWERS = (NODE_DIR / "typed_answers.ts").read_text(encoding="utf-8").splitlines()
CHECK_LINES = {m[1]: n for n, line in enumerate(TYPED_ANSWERS, 1) if (m := re.search(r"// check: (\w+)$", line))}
DEFECTS = {
    # openapi-typescript makes a property with a `default` required (its exemption covers only inline requestBody
    # and parameters schemas): the contract states defaults in descriptions (service/api/contract_schemas.py).
    "defaults_are_optional_in_requests": None,
    "regime_is_an_enum": "SizingResult.regime is a plain string",
    "obligation_is_an_enum": "CheckOut.obligation is a plain string",
    "device_type_is_an_enum": "DeviceOut.type is a plain string",
    "material_is_an_enum": "ConductorOut.material is a plain string",
    "size_system_is_an_enum": "ConductorOut.size_system is a plain string",
    "raceway_is_an_enum": "RacewayFillOut.raceway is a plain string",
    "conductor_type_is_an_enum": "CircuitIn.conductor_type is a plain string",
    "problem_type_is_an_enum": "Problem.type is a plain string",
    "element_kind_fields_are_required": "element outputs share optional nullable fields: CableRunOut.resistance_ohm "
    "is optional and nullable though a cable run always has one",
    "element_kinds_hold_only_their_fields": "CableRunOut carries the load fields (rated_power_drawn_pct ...)",
}


def test_every_check_names_its_defect():
    assert sorted(CHECK_LINES) == sorted(DEFECTS)  # the scan finds each check line, and each has a reason


def test_caller_compiles_under_tsc_strict(typescript_build):
    assert not errors_in(typescript_build, "caller.ts"), "\n".join(typescript_build.errors)
    assert (typescript_build.folder / "out" / "caller.js").is_file()
    others = [e for e in typescript_build.errors if not e.startswith(("caller.ts(", "typed_answers.ts(",
                                                                        "readme_example.ts("))]
    assert not others, "\n".join(others)  # the generated schema.d.ts and openapi-fetch's types check clean


def test_caller_calls_every_operation_with_a_key(typescript_build, keyed_server, examples_file, contract):
    done = run_caller(typescript_build, keyed_server.base_url, examples_file, API_KEY)
    assert_every_operation_answered(done, contract)


def test_caller_calls_every_operation_without_a_key_when_keys_are_off(typescript_build, open_server, examples_file,
                                                                      contract):
    done = run_caller(typescript_build, open_server.base_url, examples_file)
    assert_every_operation_answered(done, contract)


def run_caller(build, base_url: str, examples_file, api_key: str | None = None):
    env = {**os.environ, "AMPLINE_BASE_URL": base_url, "AMPLINE_EXAMPLES": str(examples_file)}
    env.pop("AMPLINE_API_KEY", None)
    if api_key is not None:
        env["AMPLINE_API_KEY"] = api_key
    return run([node(), "out/caller.js"], cwd=build.folder, env=env)


@pytest.mark.parametrize("check", [
    pytest.param(name, marks=contract_defect(reason) if reason else ()) for name, reason in DEFECTS.items()
])
def test_typed_answer(typescript_build, check):
    line = CHECK_LINES[check]
    failing = [e for e in errors_in(typescript_build, "typed_answers.ts") if e.startswith(f"typed_answers.ts({line},")]
    if failing:
        raise ContractDefect("\n".join(failing))


def test_typed_answers_fail_only_on_their_check_lines(typescript_build):
    # an error on any other line is the harness's own (an import, a helper type), not the contract's
    stray = [e for e in errors_in(typescript_build, "typed_answers.ts")
             if int(e.split("(", 1)[1].split(",", 1)[0]) not in CHECK_LINES.values()]
    assert not stray, "\n".join(stray)
