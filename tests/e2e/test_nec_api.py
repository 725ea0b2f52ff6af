"""NEC sizing, verification and raceway fill end to end through the ASGI app (in-process TestClient).

Expected numbers come from the NEC tables typed here (source beside each), never from the service.
"""

from __future__ import annotations

import msgspec
import pytest

from service.api.routes.v1.raceways import _EXAMPLES as FILL_EXAMPLES
from service.api.routes.v1.sizing import _NEC_SIZE_EXAMPLES, _NEC_VERIFY_EXAMPLES
# the same app fixture and problem+json expectations as the IEC sizing tests
from tests.e2e.test_sizing_api import client, pointers, problem  # noqa: F401  (client is a fixture)

SIZE, VERIFY, FILL = "/v1/conductors/size", "/v1/conductors/verify", "/v1/raceways/fill"


def ok(response) -> dict:
    assert response.status_code == 200, response.text
    body = response.json()
    cautions = body["notes"]["cautions"]
    assert cautions[0].startswith("Design aid only")
    assert all(step["unit"] for step in body["notes"]["steps"])
    return body


def nec_request(**changes) -> dict:
    body = {"regime": "nec", "load": {"design_current": "40 A", "continuous_share": 1.0},
            "circuit": {"length": "100 ft", "raceway": "emt"}, "supply": {"system": "240V"}}
    for key, value in changes.items():
        body[key] = {**body.get(key, {}), **value}
    return body


def test_nec_size_40_a_continuous(client):
    body = ok(client.post(SIZE, json=nec_request()))
    # 1.25 x 40 A = 50 A (210.19(A)(1)(a)); Table 240.6(A): 50 A device; 110.14(C)(1)(a): 60 °C column at <= 100 A;
    # Table 310.16 copper 60 °C: 8 AWG 40 A < 50 A, 6 AWG 55 A >= 50 A -> 6 AWG; Table 250.122 at 50 A -> 10 AWG.
    assert body["regime"].startswith("NFPA 70-2023")
    assert body["device"]["rated_current_a"] == 50 and body["device"]["conventional_current_a"] is None
    assert body["chosen"]["size_label"] == "6 AWG" and body["chosen"]["protective_conductor_size_label"] == "10 AWG"
    assert body["governing_check"] == "termination_ampacity"
    # Fill: two 6 AWG + one 10 AWG THHN = 2 x 0.0507 + 0.0211 = 0.1225 in² (Table 5); 40 % (Table 1); 1/2 EMT
    # 0.304 x 0.4 = 0.1216 < 0.1225, 3/4 EMT 0.2132 (Table 4) -> 3/4
    assert body["raceway"]["trade_size"] == "3/4" and body["raceway"]["fill_limit_pct"] == 40
    cautions = " ".join(body["notes"]["cautions"])
    assert "NFPA 70-2023" in cautions and "authority having jurisdiction" in cautions
    drop = next(c for c in body["chosen"]["checks"] if c["name"] == "voltage_drop")
    assert drop["obligation"] == "guidance" and "not a requirement" in drop["source"]
    assert {s["table_id"] for s in body["notes"]["sources"]} >= {"nec-table310-16", "nec-ch9-table9", "nec-table250-122"}


def test_lengths_in_feet_and_metres_agree(client):
    feet = ok(client.post(SIZE, json=nec_request(circuit={"length": "328.084 ft"})))
    metres = ok(client.post(SIZE, json=nec_request(circuit={"length": "100 m"})))
    assert feet["chosen"]["voltage_drop_v"] == pytest.approx(metres["chosen"]["voltage_drop_v"], rel=1e-6)


@pytest.mark.parametrize("name", list(_NEC_SIZE_EXAMPLES))
def test_nec_size_examples_answer(client, name):
    body = ok(client.post(SIZE, json=msgspec.to_builtins(_NEC_SIZE_EXAMPLES[name])))
    # No available fault current in the examples: 110.9 is not assessed, and the verdict says so (never compliant).
    assert body["verdict"] == "not_fully_assessed" and body["raceway"] is not None
    assert [n["name"] for n in body["chosen"]["not_assessed"]] == ["breaking_capacity"]


@pytest.mark.parametrize("name", list(_NEC_VERIFY_EXAMPLES))
def test_nec_verify_examples_answer(client, name):
    body = ok(client.post(VERIFY, json=msgspec.to_builtins(_NEC_VERIFY_EXAMPLES[name])))
    # 16 A continuous on 12 AWG, 210 ft at 277 V: 2 x 210 ft x 2.0 ohm/kft (Table 9) x 16 A = 13.44 V = 4.85 % > 3 %
    # guidance, while every requirement passes
    assert body["verdict"] == "meets_requirements_not_guidance"
    assert body["binding_checks"] == ["voltage_drop"]


def test_same_request_under_both_regimes_has_the_same_shape(client):
    iec = ok(client.post(SIZE, json={"load": {"design_current": "20 A"}, "circuit": {"length": "25 m", "method": "C"},
                                     "supply": {"ze": "0.35 ohm"}}))
    nec = ok(client.post(SIZE, json={"regime": "nec", "load": {"design_current": "20 A"},
                                     "circuit": {"length": "25 m"}, "supply": {"system": "120V"}}))
    assert set(iec) == set(nec)
    assert set(iec["chosen"]) == set(nec["chosen"]) and set(iec["device"]) == set(nec["device"])
    assert set(iec["chosen"]["checks"][0]) == set(nec["chosen"]["checks"][0])
    assert iec["regime"] == "IEC 60364" and iec["raceway"] is None


def test_verify_metric_size_with_nec_is_a_422(client):
    body = problem(client.post(VERIFY, json=nec_request(circuit={"size": "6 mm^2"})), 422)
    assert "/circuit/size" in pointers(body)


def test_unknown_raceway_type_is_a_422_naming_it(client):
    assert pointers(problem(client.post(SIZE, json=nec_request(circuit={"raceway": "garden_hose"})), 422)) == {"/circuit/raceway"}
    body = problem(client.post(FILL, json={"raceway": "garden_hose", "conductors": [
        {"type": "THHN", "size": "12 AWG", "count": 3}]}), 422)
    assert pointers(body) == {"/raceway"}


def test_negative_length_is_a_422(client):
    assert pointers(problem(client.post(SIZE, json=nec_request(circuit={"length": "-50 ft"})), 422)) == {"/circuit/length"}


def test_iec_only_fields_with_nec_are_named(client):
    body = problem(client.post(SIZE, json=nec_request(circuit={"method": "C"}, supply={"ze": "0.35 ohm"},
                                                       protection={"device": {"type": "B"}})), 422)
    assert pointers(body) == {"/circuit/method", "/supply/ze", "/protection/device/type"}


def test_nec_only_fields_with_iec_are_named(client):
    body = problem(client.post(SIZE, json={"load": {"design_current": "20 A", "continuous_share": 0.5},
                                           "circuit": {"length": "25 m", "method": "C", "raceway": "emt"},
                                           "supply": {"ze": "0.35 ohm", "system": "120V"}}), 422)
    assert pointers(body) == {"/load/continuous_share", "/circuit/raceway", "/supply/system"}


def test_contradictory_nec_inputs_are_named(client):
    body = problem(client.post(SIZE, json=nec_request(load={"phases": "three"})), 422)
    assert pointers(body) == {"/load/phases"}  # 240V is single-phase
    body = problem(client.post(SIZE, json=nec_request(circuit={"conductor_type": "TW", "insulation_rating": 90})), 422)
    assert pointers(body) == {"/circuit/insulation_rating"}  # TW is a 60 °C type (Table 310.4(A))
    body = problem(client.post(SIZE, json=nec_request(supply={"system": "480Y/277V"},
                                                       circuit={"current_carrying_conductors": 2})), 422)
    assert pointers(body) == {"/circuit/current_carrying_conductors"}
    body = problem(client.post(SIZE, json=nec_request(supply={"system": "240V", "frequency": "50 Hz"})), 422)
    assert pointers(body) == {"/supply/frequency"}
    body = problem(client.post(SIZE, json={"regime": "nec", "load": {"design_current": "20 A"},
                                           "circuit": {"length": "25 m"}, "supply": {}}), 422)
    assert pointers(body) == {"/supply/system"}


def test_iec_still_requires_method_and_ze(client):
    body = problem(client.post(SIZE, json={"load": {"design_current": "20 A"}, "circuit": {"length": "25 m"},
                                           "supply": {}}), 422)
    assert pointers(body) == {"/circuit/method", "/supply/ze"}


def test_fill_endpoint_by_hand(client):
    body = ok(client.post(FILL, json={"raceway": "pvc_80", "conductors": [
        {"type": "THWN-2", "size": "12 AWG", "count": 10}]}))
    # Ten 12 AWG THWN-2: 10 x 0.0133 = 0.133 in² (Table 5); 40 % (Table 1); PVC Schedule 80 (Table 4, from memory):
    # 1/2 0.4 x 0.217 = 0.0868 (0.0868 / 0.0133 = 6.5 -> 6 < 10), 3/4 0.4 x 0.409 = 0.1636 >= 0.133 -> 3/4
    fill = body["fill"]
    assert fill["trade_size"] == "3/4" and fill["conductor_count"] == 10
    assert [t["fits"] for t in fill["considered"]] == [False, True]
    assert fill["conductor_area_m2"] == pytest.approx(0.133 * 0.0254**2)


@pytest.mark.parametrize("name", list(FILL_EXAMPLES))
def test_fill_examples_answer(client, name):
    body = ok(client.post(FILL, json=msgspec.to_builtins(FILL_EXAMPLES[name])))
    assert body["fill"]["trade_size"] is not None


def test_fill_too_many_conductors_has_no_trade_size(client):
    body = ok(client.post(FILL, json={"raceway": "emt", "conductors": [
        {"type": "THHN", "size": "1000 kcmil", "count": 20}]}))
    # 20 x 1.3478 = 26.96 in² > 0.4 x 14.753 = 5.90 in² (4 EMT, the largest in Table 4)
    assert body["fill"]["trade_size"] is None and len(body["fill"]["considered"]) == 10


def test_fill_bad_fields_are_422s(client):
    body = problem(client.post(FILL, json={"raceway": "emt", "conductors": [
        {"type": "THHN", "size": "2.5 mm^2", "count": 3}, {"type": "THHN", "size": "1500 kcmil", "count": 1}]}), 422)
    assert pointers(body) >= {"/conductors/0/size"}
    body = problem(client.post(FILL, json={"raceway": "emt", "conductors": [{"type": "XYZ", "size": "12 AWG",
                                                                               "count": 1}]}), 422)
    assert pointers(body) == {"/conductors/0/type"}


def test_meta_lists_the_nec_tables_with_edition(client):
    tables = {t["table_id"]: t for t in client.get("/v1/meta").json()["tables"]}
    for table_id in ("nec-table310-16", "nec-table310-15-b1-1", "nec-table310-15-c1", "nec-table240-6a", "nec-240-4d",
                     "nec-ch9-table9", "nec-table250-122", "nec-ch9-table1", "nec-ch9-table4", "nec-ch9-table5"):
        assert tables[table_id]["edition"] == "2023" and tables[table_id]["standard"] == "NFPA 70 (NEC)"


def test_free_air_uses_table_310_17(client):
    body = ok(client.post(SIZE, json={"regime": "nec", "load": {"design_current": "100 A", "continuous_share": 0},
                                      "circuit": {"length": "30 ft", "installation": "free_air", "termination_rating": 75},
                                      "supply": {"system": "240V"}}))
    # The conductor's ampacity from Table 310.17 (THHN 90 °C column), but the 75 °C termination limit from Table
    # 310.16 (NEC 2023, 110.14(C)(1)): 4 AWG 85 A < 100 A, 3 AWG 100 A -> 3 AWG (Table 310.17's 75 °C column alone
    # would have let 4 AWG, 125 A, through)
    assert body["chosen"]["size_label"] == "3 AWG" and "Table 310.17" in body["chosen"]["capacity_basis"]
    body = problem(client.post(SIZE, json=nec_request(circuit={"installation": "free_air"})), 422)
    assert pointers(body) == {"/circuit/raceway", "/circuit/installation"}


def test_parallel_sets_and_breaking_capacity_through_the_api(client):
    # NEC 2023, 310.10(G): 600 A non-continuous on a 600 A device; 1000 kcmil alone 545 A (Table 310.16, 75 °C) is
    # short, two sets of 350 kcmil (2 x 310 A = 620 A) pass; 250.122(F)(1)(b): a 1 AWG EGC in each raceway
    body = ok(client.post(SIZE, json=nec_request(
        load={"design_current": "600 A", "continuous_share": 0.0},
        circuit={"length": "100 ft", "raceway": "emt", "role": "feeder"}, supply={"system": "480Y/277V",
                                                                                  "available_fault_current": "18 kA"},
        protection={"device": {"rated_current": "600 A"}, "interrupting_rating": "22 kA"})))
    chosen = body["chosen"]
    assert (chosen["parallel_sets"], chosen["size_label"], chosen["protective_conductor_size_label"]) == (2, "350 kcmil", "1 AWG")
    # NEC 2023, 110.9: 22 kA >= 18 kA
    breaking = next(c for c in chosen["checks"] if c["name"] == "breaking_capacity")
    assert breaking["passes"] and breaking["value"] == 22000 and breaking["limit"] == 18000
    assert all(ev["parallel_sets"] == 1 for ev in body["rejected"][:5])
    # NEC Table 310.16 ampacities are answered as floats, as the IEC regime's are
    assert isinstance(chosen["tabulated_capacity_a"], float)


def test_breaking_capacity_not_assessed_without_fault_current(client):
    body = ok(client.post(SIZE, json=nec_request()))
    assert not any(c["name"] == "breaking_capacity" for c in body["chosen"]["checks"])
    assert any(c.startswith("Not assessed: breaking_capacity") for c in body["notes"]["cautions"])


def test_verify_parallel_below_1_0_awg_is_a_422(client):
    # NEC 2023, 310.10(G)(1): conductors in parallel 1/0 AWG and larger
    body = problem(client.post(VERIFY, json=nec_request(circuit={"size": "2 AWG", "parallel_sets": 2})), 422)
    assert pointers(body) == {"/circuit/size", "/circuit/parallel_sets"}


def test_new_nec_fields_with_iec_are_named(client):
    body = problem(client.post(VERIFY, json={
        "load": {"design_current": "20 A"}, "circuit": {"length": "25 m", "method": "C", "size": "2.5 mm^2",
                                                          "parallel_sets": 2, "parallel_raceways": "shared"},
        "protection": {"interrupting_rating": "10 kA"},
        "supply": {"ze": "0.35 ohm", "available_fault_current": "6 kA"}}), 422)
    # parallel_sets belongs to both regimes (IEC 60364-5-52 523.7 too), the others to the NEC alone.
    assert pointers(body) == {"/circuit/parallel_raceways", "/protection/interrupting_rating",
                              "/supply/available_fault_current"}


# --------------------------------------------------------------------------- issue 14: inputs read as what they are


def test_nec_kva_is_apparent_power(client):
    body = ok(client.post(SIZE, json=nec_request(load={"design_current": None, "power": "10 kVA",
                                                       "power_factor": 0.8})))
    # common practice: S = V I, so I = 10000 VA / 240 V = 41.67 A (not 10000 / (240 x 0.8) = 52.1 A)
    assert body["design_current_a"] == pytest.approx(10_000 / 240, rel=1e-9)
    step = next(s for s in body["notes"]["steps"] if s["name"] == "Load current")
    assert "apparent power S given" in step["formula"]


def test_nec_kvar_is_a_422(client):
    body = problem(client.post(SIZE, json=nec_request(load={"design_current": None, "power": "10 kvar"})), 422)
    assert pointers(body) == {"/load/power"}


def test_nec_three_phase_load_at_line_to_neutral_voltage_is_a_422(client):
    # 208Y/120V: 120 V line-to-neutral, 208 V line-to-line (common practice: 208 = √3 x 120)
    body = problem(client.post(SIZE, json=nec_request(load={"design_current": None, "power": "18 kW",
                                                            "voltage": "120 V"}, supply={"system": "208Y/120V"})), 422)
    assert pointers(body) == {"/load/voltage"}
    assert "line-to-line" in str(body["errors"]) and "line-to-neutral" in str(body["errors"])


@pytest.mark.parametrize(("system", "voltage"), [("208Y/120V", "208 V"), ("208Y/120V", "200 V"), ("240V", "230 V")])
def test_nec_load_voltage_of_the_system_is_accepted_and_the_nominal_used(client, system, voltage):
    body = ok(client.post(SIZE, json=nec_request(load={"design_current": None, "power": "12 kW", "voltage": voltage},
                                                 supply={"system": system})))
    # NFPA 70-2023, 220.5(A): loads are computed at the nominal system voltage (208 V, 240 V), from memory
    nominal = 208 * 3 ** 0.5 if system == "208Y/120V" else 240
    assert body["design_current_a"] == pytest.approx(12_000 / nominal, rel=1e-9)


@pytest.mark.parametrize(("system", "voltage"), [("240V", "120 V"), ("120V", "240 V"), ("480Y/277V", "400 V")])
def test_nec_load_voltage_that_does_not_fit_the_system_is_a_422(client, system, voltage):
    body = problem(client.post(SIZE, json=nec_request(load={"design_current": None, "power": "5 kW",
                                                            "voltage": voltage}, supply={"system": system})), 422)
    assert pointers(body) == {"/load/voltage"}


@pytest.mark.parametrize("rating", ["17 A", "37 A", 55])
def test_nec_non_standard_device_rating_is_a_422(client, rating):
    # NFPA 70-2023, Table 240.6(A): ... 15, 20, 25, 30, 35, 40, 45, 50, 60 ... A; 17, 37 and 55 A are not listed
    body = problem(client.post(SIZE, json=nec_request(protection={"device": {"rated_current": rating}})), 422)
    assert pointers(body) == {"/protection/device/rated_current"}
    assert "Table 240.6(A)" in str(body["errors"])
