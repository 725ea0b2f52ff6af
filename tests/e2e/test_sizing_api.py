"""POST /v1/conductors/size and /v1/conductors/verify end to end through the ASGI app (in-process TestClient).

Expected numbers come from the standards' tables typed here (source beside each), never from the service.
"""

from __future__ import annotations

import msgspec
import pytest
from litestar.testing import TestClient

from service.api.app import create_app
from service.api.routes.v1.sizing import _SIZE_EXAMPLES, _VERIFY_EXAMPLES
from service.api.settings import Settings

PROBLEM = "application/problem+json"
SIZE = "/v1/conductors/size"
VERIFY = "/v1/conductors/verify"


@pytest.fixture(scope="module")
def client():
    with TestClient(create_app(Settings())) as c:
        yield c


def ok(response) -> dict:
    assert response.status_code == 200, response.text
    body = response.json()
    cautions = body["notes"]["cautions"]
    assert cautions[0].startswith("Design aid only")
    assert any(c.startswith("Installation conditions must match the inputs") for c in cautions)
    assert all(step["unit"] is not None for step in body["notes"]["steps"])
    return body


def problem(response, status: int) -> dict:
    assert response.status_code == status, response.text
    assert response.headers["content-type"].startswith(PROBLEM)
    body = response.json()
    assert body["status"] == status and "Traceback" not in response.text
    return body


def pointers(body: dict) -> set[str]:
    return {e["pointer"] for e in body.get("errors", [])}


def request(**changes) -> dict:
    body = {"load": {"design_current": "20 A", "power_factor": 0.95},
            "circuit": {"length": "25 m", "method": "C"},
            "supply": {"ze": "0.35 ohm"}}
    for key, value in changes.items():
        body[key] = {**body.get(key, {}), **value}
    return body


@pytest.mark.parametrize("name", list(_SIZE_EXAMPLES))
def test_size_examples_answer(client, name):
    body = ok(client.post(SIZE, json=msgspec.to_builtins(_SIZE_EXAMPLES[name])))
    assert body["verdict"] in ("compliant", "no_compliant_size")
    assert body["notes"]["sources"] and body["factors"]


@pytest.mark.parametrize("name", list(_VERIFY_EXAMPLES))
def test_verify_examples_answer(client, name):
    body = ok(client.post(VERIFY, json=msgspec.to_builtins(_VERIFY_EXAMPLES[name])))
    assert body["verdict"] in ("compliant", "non_compliant")
    assert {c["name"] for c in body["chosen"]["checks"]} >= {"ampacity", "voltage_drop", "earth_fault_loop"}


def test_size_answer_in_si_with_units_in_names(client):
    body = ok(client.post(SIZE, json=request()))
    chosen = body["chosen"]
    # IEC 60364-5-52 Table B.52.2, method C, two loaded copper conductors (from memory): 1.5 mm² 19.5 A, 2.5 mm² 27 A;
    # IEC 60898-1 preferred ratings: 20 A is the smallest >= Ib 20 A, so 1.5 mm² (19.5 A < 20 A) fails
    assert body["device"]["rated_current_a"] == 20 and body["device"]["chosen_by_service"]
    assert chosen["size_label"] == "2.5 mm²" and chosen["area_m2"] == pytest.approx(2.5e-6)
    assert body["rejected"][0]["size_label"] == "1.5 mm²" and "ampacity" in body["rejected"][0]["failing_checks"]
    assert body["governing_check"] == "ampacity"
    assert chosen["metal_mass_kg"] == pytest.approx(8890 * 25 * 3 * 2.5e-6)  # IEC 60028 copper, L + N + PE


def test_verify_reports_failures_as_a_200_verdict(client):
    body = ok(client.post(VERIFY, json=request(circuit={"size": "1.5 mm^2"})))
    assert body["verdict"] == "non_compliant" and "ampacity" in body["binding_checks"]
    assert body["ways_out"]


def test_no_compliant_size_is_a_200(client):
    body = ok(client.post(SIZE, json=request(circuit={"length": "5 km"})))
    assert body["verdict"] == "no_compliant_size" and body["chosen"] is None
    assert "voltage_drop" in body["binding_checks"] and body["ways_out"]


def test_method_contradicting_the_ambient_medium_is_a_422(client):
    body = problem(client.post(SIZE, json=request(circuit={"method": "D2", "ambient_medium": "air"})), 422)
    assert "/circuit/ambient_medium" in pointers(body)


def test_negative_length_is_a_422_naming_the_field(client):
    body = problem(client.post(SIZE, json=request(circuit={"length": "-5 m"})), 422)
    assert pointers(body) == {"/circuit/length"}
    bare = problem(client.post(SIZE, json=request(circuit={"length": -5})), 422)  # msgspec bounds: 422 by the app
    assert pointers(bare) == {"/circuit/length"}


def test_unknown_method_is_refused_naming_the_field(client):
    response = client.post(SIZE, json=request(circuit={"method": "Z9"}))
    assert response.status_code in (400, 422)
    assert response.headers["content-type"].startswith(PROBLEM)
    assert "/circuit/method" in pointers(response.json())


def test_wrong_unit_and_both_load_forms_are_named_together(client):
    body = problem(client.post(SIZE, json=request(load={"power": "3 kW"}, supply={"ze": "3 kg"})), 422)
    assert {"/load", "/supply/ze"} <= pointers(body)


def test_verify_unknown_size_is_a_422(client):
    body = problem(client.post(VERIFY, json=request(circuit={"size": "7 mm^2"})), 422)
    assert "/circuit/size" in pointers(body)


def test_tt_rcd_without_electrode_is_a_422(client):
    body = problem(client.post(SIZE, json=request(protection={"rcd": {"rated_residual_current": "30 mA"}},
                                                  supply={"earthing": "TT", "ze": "20 ohm"})), 422)
    assert "/supply/electrode_resistance" in pointers(body)


def test_unknown_field_is_a_400(client):
    body = problem(client.post(SIZE, json=request(circuit={"colour": "red"})), 400)
    assert body["errors"]


def test_protection_inputs_of_issue_14_reach_the_checks(client):
    # IEC 60364-4-43:2008, 434.5.1: a 10 kA device against 8 kA prospective; EN 60898-1 Annex ZA (from memory):
    # class 3, type B 16 A, at 10 kA column for 8 kA: 70 000 A²s <= (115 x 4)² = 211 600 A²s (Table 43A, k = 115).
    body = ok(client.post(VERIFY, json=request(
        circuit={"size": "4 mm2"}, load={"design_current": "10 A"},
        protection={"device": {"type": "B", "rated_current": "16 A", "breaking_capacity": "10 kA", "energy_class": 3}},
        supply={"earthing": "TN-S", "prospective_fault_current": "8 kA"},
        protective_conductor={"mode": "given", "size": "2.5 mm2", "kind": "separate_insulated",
                              "mechanically_protected": True})))
    checks = {c["name"]: c for c in body["chosen"]["checks"]}
    assert checks["breaking_capacity"]["passes"] and checks["breaking_capacity"]["limit"] == 10000.0
    assert checks["line_conductor_adiabatic"]["value"] == 70000.0
    assert checks["protective_conductor_minimum"]["passes"]  # 543.1.3: 2.5 mm² copper with mechanical protection
    assert body["chosen"]["not_assessed"] == []


def test_not_assessed_checks_are_listed_not_passed(client):
    # A TT supply without a prospective fault current: breaking capacity cannot be assessed (Ze is the earth path)
    body = ok(client.post(VERIFY, json=request(
        circuit={"size": "4 mm2"}, protection={"rcd": {"rated_residual_current": "30 mA"}},
        supply={"earthing": "TT", "ze": "20 ohm", "electrode_resistance": "10 ohm"})))
    names = {n["name"] for n in body["chosen"]["not_assessed"]}
    assert "breaking_capacity" in names
    assert "breaking_capacity" not in {c["name"] for c in body["chosen"]["checks"]}


def test_given_protective_conductor_needs_its_kind(client):
    body = problem(client.post(VERIFY, json=request(
        circuit={"size": "4 mm2"}, protective_conductor={"mode": "given", "size": "2.5 mm2"})), 422)
    assert "/protective_conductor/kind" in pointers(body)


def test_issue_14_protection_fields_are_refused_where_they_do_not_apply(client):
    body = problem(client.post(VERIFY, json=request(
        circuit={"size": "4 mm2"}, protection={"device": {"type": "B", "fuse_system": "bs88_2"}},
        protective_conductor={"mechanically_protected": True})), 422)
    assert {"/protection/device/fuse_system", "/protective_conductor/mechanically_protected"} <= pointers(body)
