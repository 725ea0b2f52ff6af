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


def test_answer_shows_r_x_z_and_the_arrangement_of_each_size(client):
    # BS 7671:2018 Table 4E1B (CSE Distributors' reproduction), 95 mm² single-core XLPE, three-phase, flat spaced:
    # r 0.43, x 0.25 mV/A/m at 90 °C; the answer carries the per-size impedance as fields, not only in prose.
    body = ok(client.post(VERIFY, json=request(
        load={"phases": "three", "design_current": "150 A", "power_factor": 0.8},
        circuit={"length": "80 m", "method": "F", "cable": "single_core", "formation": "flat_spaced",
                 "insulation": "xlpe_epr_90", "size": "95 mm^2"},
        protection={"device": {"type": "gG", "rated_current": "250 A"}, "required_disconnection_time": "5 s"},
        limits={"voltage_drop": 10})))
    size = body["chosen"]
    assert 0.97 * 0.43 <= size["r_mv_per_a_m"] <= 1.05 * 0.43
    assert 0.97 * 0.25 <= size["x_mv_per_a_m"] <= 1.12 * 0.25
    assert size["z_ohm_per_m"] == pytest.approx((size["r_ohm_per_m"] ** 2 + size["x_ohm_per_m"] ** 2) ** 0.5)
    assert size["x_ohm_per_m"] * 1000 * 3 ** 0.5 == pytest.approx(size["x_mv_per_a_m"])
    assert "flat, spaced one cable diameter" in size["line_impedance_basis"]
    assert size["drop_conductor_temperature_degc"] == 90.0
    assert body["drop_temperature_basis"] == "maximum_operating"
    assert any("arrangement 'flat_spaced'" in a for a in body["notes"]["assumptions"])


def test_drop_temperature_estimated_from_the_load_is_named_in_the_answer(client):
    # theta = theta_a + (theta_max - theta_a)(Ib/Iz)^2 (common practice): 2.5 mm² PVC method C, two loaded, It 27 A
    # (IEC 60364-5-52:2009 Table B.52.2, column C; BS 7671 Table 4D2A), 30 °C: Ib 18 A -> 30 + 40 (18/27)^2 = 47.8 °C.
    base = request(load={"design_current": "18 A", "power_factor": 1.0},
                   circuit={"length": "30 m", "method": "C", "size": "2.5 mm^2"},
                   protection={"device": {"type": "B", "rated_current": "20 A"}})
    hot = ok(client.post(VERIFY, json=base))
    base["circuit"]["drop_temperature_basis"] = "estimated_from_load"
    warm = ok(client.post(VERIFY, json=base))
    assert warm["drop_temperature_basis"] == "estimated_from_load"
    assert warm["chosen"]["drop_conductor_temperature_degc"] == pytest.approx(30 + 40 * (18 / 27) ** 2, rel=1e-9)
    # The drop follows the resistance: (234.5 + 47.8) / (234.5 + 70), IEC 60228:2004 Annex B formula B.1.
    ratio = (234.5 + 30 + 40 * (18 / 27) ** 2) / (234.5 + 70.0)
    assert warm["chosen"]["voltage_drop_v"] == pytest.approx(hot["chosen"]["voltage_drop_v"] * ratio, rel=2e-3)
    # The earth-fault loop stays at the maximum temperature whatever the drop basis.
    assert warm["chosen"]["zs_ohm"] == pytest.approx(hot["chosen"]["zs_ohm"], rel=1e-12)
    assert any("basis estimated_from_load" in a for a in warm["notes"]["assumptions"])


def test_flat_spaced_in_conduit_and_drop_basis_for_the_nec_are_refused(client):
    # Methods A1/B1 (IEC 60364-5-52 Table B.52.1) are in conduit or trunking: cables there cannot be spaced.
    body = problem(client.post(SIZE, json=request(
        circuit={"method": "B1", "cable": "single_core", "formation": "flat_spaced"})), 422)
    assert "/circuit/formation" in pointers(body)
    nec = {"regime": "nec", "load": {"design_current": "20 A"},
           "circuit": {"length": "50 ft", "drop_temperature_basis": "estimated_from_load"},
           "supply": {"system": "120V"}}
    assert "/circuit/drop_temperature_basis" in pointers(problem(client.post(SIZE, json=nec), 422))
