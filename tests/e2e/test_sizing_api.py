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
    assert body["verdict"] in ("compliant", "not_fully_assessed", "no_compliant_size")
    if body["verdict"] == "not_fully_assessed":  # what was not assessed is said, with what would settle it
        assert body["chosen"]["not_assessed"] and all(n["reason"] for n in body["chosen"]["not_assessed"])
    assert body["notes"]["sources"] and body["factors"]


@pytest.mark.parametrize("name", list(_VERIFY_EXAMPLES))
def test_verify_examples_answer(client, name):
    body = ok(client.post(VERIFY, json=msgspec.to_builtins(_VERIFY_EXAMPLES[name])))
    assert body["verdict"] in ("compliant", "not_fully_assessed", "non_compliant")
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


# --------------------------------------------------------------------------- issue 14: inputs read as what they are


def _ib_step(body: dict) -> dict:
    return next(s for s in body["notes"]["steps"] if s["name"] == "Design current Ib")


def test_kva_is_apparent_power_not_active(client):
    body = ok(client.post(SIZE, json=request(load={"design_current": None, "power": "10 kVA", "power_factor": 0.8})))
    # common practice: S = U I single-phase, so Ib = 10000 VA / 230 V = 43.48 A whatever cos φ is (not 10000 / (230 x
    # 0.8) = 54.3 A, which reads the kVA as kW)
    assert body["design_current_a"] == pytest.approx(10_000 / 230, rel=1e-9)
    assert "apparent power S given" in _ib_step(body)["formula"] and "P = S cos φ = 8000 W" in _ib_step(body)["formula"]


def test_kva_three_phase_is_s_over_root3_u(client):
    body = ok(client.post(SIZE, json=request(load={"design_current": None, "phases": "three", "power": "30 kVA",
                                                   "power_factor": 0.7})))
    # common practice: S = √3 U I, U = √3 x 230 V = 398.4 V line-to-line: Ib = 30000 / (√3 x 398.4) = 43.48 A
    assert body["design_current_a"] == pytest.approx(30_000 / (3 * 230), rel=1e-9)


def test_kw_step_says_active_power_was_given(client):
    body = ok(client.post(SIZE, json=request(load={"design_current": None, "power": "8 kW", "power_factor": 0.8})))
    assert body["design_current_a"] == pytest.approx(8000 / (230 * 0.8), rel=1e-9)  # common practice: P = U I cos φ
    assert "active power P given" in _ib_step(body)["formula"]


def test_kvar_for_the_load_power_is_a_422(client):
    body = problem(client.post(SIZE, json=request(load={"design_current": None, "power": "6 kvar"})), 422)
    assert pointers(body) == {"/load/power"}


def test_kva_with_an_efficiency_is_a_422(client):
    body = problem(client.post(SIZE, json=request(load={"design_current": None, "power": "10 kVA",
                                                        "efficiency": 0.9})), 422)
    assert pointers(body) == {"/load/efficiency"}


def test_three_phase_load_at_u0_is_a_422_explaining_line_to_line(client):
    # 18 kW three-phase at "230 V" on a 230/400 V supply: 230 V is U0 (line-to-neutral); the line-to-line voltage is
    # √3 x 230 = 398 V (common practice: U = √3 U0 in a star system)
    body = problem(client.post(SIZE, json=request(load={"design_current": None, "phases": "three", "power": "18 kW",
                                                        "voltage": "230 V"})), 422)
    assert pointers(body) == {"/load/voltage"}
    message = body["errors"][0]["detail"] if "detail" in body["errors"][0] else str(body["errors"][0])
    assert "line-to-line" in message and "line-to-neutral" in message and "398" in message


@pytest.mark.parametrize(("phases", "voltage"), [("three", "300 V"), ("single", "400 V"), ("single", "110 V")])
def test_load_voltage_that_does_not_fit_the_supply_is_a_422(client, phases, voltage):
    # IEC 60038:2009 Table 1: ±10 % of 230 V or of 400 V (from memory); 300 V and 110 V fit neither, and a
    # single-phase circuit here runs line to neutral, so 400 V does not fit it
    body = problem(client.post(SIZE, json=request(load={"design_current": None, "phases": phases, "power": "5 kW",
                                                        "voltage": voltage})), 422)
    assert pointers(body) == {"/load/voltage"}


def test_three_phase_load_at_400_v_on_230_v_supply_is_accepted(client):
    body = ok(client.post(SIZE, json=request(load={"design_current": None, "phases": "three", "power": "18 kW",
                                                   "voltage": "400 V", "power_factor": 0.9})))
    # common practice: Ib = P / (√3 U cos φ) = 18000 / (√3 x 400 x 0.9) = 28.87 A
    assert body["design_current_a"] == pytest.approx(18_000 / (3 ** 0.5 * 400 * 0.9), rel=1e-9)


@pytest.mark.parametrize(("device", "rating"), [("B", "37 A"), ("C", "7 A"), ("B", 35), ("gG", "36 A")])
def test_a_non_standard_device_rating_is_a_422(client, device, rating):
    # IEC 60898-1:2015, 5.3.2 preferred rated currents: 6, 8, 10, 13, 16, 20, 25, 32, 40, 50, 63, 80, 100, 125 A
    # IEC 60269-1:2006, 5.3.1 fuse-link rated currents: ... 25, 32, 40 ... A (from memory)
    body = problem(client.post(SIZE, json=request(protection={"device": {"type": device, "rated_current": rating}})),
                   422)
    assert pointers(body) == {"/protection/device/rated_current"}
    assert "not a standard rating" in str(body["errors"])


def test_a_standard_device_rating_is_accepted(client):
    body = ok(client.post(SIZE, json=request(protection={"device": {"type": "B", "rated_current": "32 A"}})))
    assert body["device"]["rated_current_a"] == 32  # IEC 60898-1:2015, 5.3.2: 32 A is a preferred rating


def test_tt_with_ze_below_the_electrode_resistance_is_a_422(client):
    # IEC 60364-4-41:2005, 411.5.4 (TT: the fault loop includes the installation's electrode RA): Ze 0.45 ohm cannot
    # be the loop of an installation whose electrode alone is 120 ohm
    body = problem(client.post(SIZE, json=request(supply={"earthing": "TT", "ze": "0.45 ohm",
                                                          "electrode_resistance": "120 ohm"},
                                                  protection={"rcd": {"rated_residual_current": "30 mA"}})), 422)
    assert pointers(body) == {"/supply/ze", "/supply/electrode_resistance"}
    assert "electrode" in str(body["errors"])


def test_tt_with_ze_above_the_electrode_resistance_is_accepted(client):
    ok(client.post(SIZE, json=request(supply={"earthing": "TT", "ze": "140 ohm", "electrode_resistance": "120 ohm"},
                                      protection={"rcd": {"rated_residual_current": "30 mA"}})))


def test_a_length_string_without_a_unit_is_a_422_saying_which_unit_a_number_means(client):
    body = problem(client.post(SIZE, json=request(circuit={"length": "30"})), 422)
    assert pointers(body) == {"/circuit/length"}
    assert "give a unit, e.g. '30 m', or a bare number (meaning metres)" in str(body["errors"])
    ok(client.post(SIZE, json=request(circuit={"length": 30})))  # the JSON number is metres, as documented


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


def test_given_protective_conductor_without_kind_is_a_core_of_the_cable(client):
    # v1 callers keep working: a given size without its kind is taken as a core of the cable, whose k
    # (IEC 60364-5-54:2011 Table A.54.4: 115 for 70 °C PVC copper) is the lowest of Tables A.54.2-A.54.5.
    given = {"mode": "given", "size": "2.5 mm2"}
    plain = ok(client.post(VERIFY, json=request(circuit={"size": "4 mm2"}, protective_conductor=given)))
    core = ok(client.post(VERIFY, json=request(circuit={"size": "4 mm2"},
                                               protective_conductor={**given, "kind": "cable_core"})))
    assert plain["chosen"]["checks"] == core["chosen"]["checks"]
    assert "protective_conductor_minimum" not in {c["name"] for c in plain["chosen"]["checks"]}
    assert any("k = 115" in c["detail"] for c in plain["chosen"]["checks"] if c["name"] == "protective_conductor_adiabatic")


def test_issue_14_protection_fields_are_refused_where_they_do_not_apply(client):
    body = problem(client.post(VERIFY, json=request(
        circuit={"size": "4 mm2"}, protection={"device": {"type": "B", "fuse_system": "bs88_2"}},
        protective_conductor={"mechanically_protected": True})), 422)
    assert {"/protection/device/fuse_system", "/protective_conductor/mechanically_protected"} <= pointers(body)


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
    assert verified["verdict"] in ("compliant", "not_fully_assessed") and verified["chosen"]["iz_a"] == pytest.approx(742.4)


def test_iec_only_harmonics_are_refused_for_the_nec(client):
    # Third-harmonic content is IEC 60364-5-52 Annex E's input; parallel_sets belongs to both regimes.
    nec = {"regime": "nec", "load": {"design_current": "40 A", "continuous_share": 1.0,
                                     "third_harmonic_content": 40},
           "circuit": {"length": "100 ft", "raceway": "emt", "size": "6 AWG"},
           "supply": {"system": "240V"}}
    body = problem(client.post(VERIFY, json=nec), 422)
    assert pointers(body) == {"/load/third_harmonic_content"}
