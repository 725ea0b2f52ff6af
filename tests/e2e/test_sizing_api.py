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
    # 20 km: even four parallel sets of 300 mm² exceed the drop limit (5 km passes with 2 x 240 mm² in parallel)
    body = ok(client.post(SIZE, json=request(circuit={"length": "20 km"})))
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


def test_third_harmonic_content_sizes_on_the_neutral(client):
    body = ok(client.post(SIZE, json=request(load={"phases": "three", "design_current": "39 A",
                                                   "third_harmonic_content": 50}, circuit={"length": "10 m"})))
    neutral = next(c for c in body["chosen"]["checks"] if c["name"] == "neutral_ampacity")
    assert neutral["value"] == pytest.approx(3 * 0.5 * 39)  # IEC 60364-5-52 Annex E: IN = 3 h Ib
    assert "Table E.52.1" in neutral["source"]
    assert any(s["table_id"] == "iec60364-5-52-tableE52-1" for s in body["notes"]["sources"])
    bad = problem(client.post(SIZE, json=request(load={"third_harmonic_content": 120})), 422)
    assert "/load/third_harmonic_content" in pointers(bad)


def test_parallel_sets_in_the_answer_and_in_verify(client):
    feeder = {"load": {"phases": "three", "design_current": "600 A", "power_factor": 0.9},
              "protection": {"device": {"type": "gG"}}, "supply": {"ze": "0.02 ohm"}}
    sized = ok(client.post(SIZE, json=request(**feeder)))
    # IEC 60364-5-52 523.7 / IEC 60364-4-43 433.4.1: two sets of 300 mm², Iz = 2 x 464 x 0.8 (hand calculation in
    # tests/unit/test_sizing_extra.py)
    assert sized["chosen"]["parallel_sets"] == 2 and sized["chosen"]["size_label"] == "300 mm²"
    assert sized["rejected"][0]["parallel_sets"] == 1
    verified = ok(client.post(VERIFY, json=request(**{**feeder, "circuit": {"size": "300 mm2", "parallel_sets": 2}})))
    assert verified["verdict"] == "compliant" and verified["chosen"]["iz_a"] == pytest.approx(742.4)


def test_iec_only_parallel_sets_and_harmonics_are_refused_for_the_nec(client):
    nec = {"regime": "nec", "load": {"design_current": "40 A", "continuous_share": 1.0,
                                     "third_harmonic_content": 40},
           "circuit": {"length": "100 ft", "raceway": "emt", "size": "6 AWG", "parallel_sets": 2},
           "supply": {"system": "240V"}}
    body = problem(client.post(VERIFY, json=nec), 422)
    assert {"/circuit/parallel_sets", "/load/third_harmonic_content"} <= pointers(body)
