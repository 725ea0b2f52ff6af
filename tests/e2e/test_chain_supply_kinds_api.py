"""POST /v1/lead-chains/analyse: plug-fuse ratings, reduced-low-voltage supplies and AWG or 1.25 mm² cords."""

from __future__ import annotations

import pytest
from litestar.testing import TestClient

from service.api.app import create_app
from service.api.settings import Settings

URL = "/v1/lead-chains/analyse"
SOCKET = {"loop_impedance": {"resistance": "0.35 ohm"}, "earth_loop_impedance": {"resistance": "0.6 ohm"},
          "device": {"type": "B", "rated_current": "16 A"}, "rcd": {"rated_residual_current": "30 mA"}}


@pytest.fixture(scope="module")
def client():
    with TestClient(create_app(Settings())) as c:
        yield c


def pointers(response) -> set[str]:
    assert response.status_code == 422, response.text
    return {e["pointer"] for e in response.json().get("errors", [])}


def test_a_plug_fuse_rating_bs1362_does_not_have_is_refused(client):
    # BS 1362:1973 scope: ratings not exceeding 13 A
    body = {"supply": SOCKET, "leads": [{"length": "8 m", "size": "1.5 mm^2", "plug_fuse": "15 A"}],
            "appliances": [{"rated_power": "1 kW"}]}
    assert pointers(client.post(URL, json=body)) == {"/leads/0/plug_fuse"}


def test_a_plug_fuse_answers_with_its_band(client):
    # BS 1362:1973: fusing current 1.9 In = 24.7 A for a 13 A link, non-fusing 1.6 In = 20.8 A (from memory)
    body = {"supply": SOCKET, "leads": [{"length": "8 m", "size": "1.5 mm^2", "plug_fuse": "13 A"}],
            "appliances": [{"rated_power": "1 kW"}]}
    answer = client.post(URL, json=body).json()
    fuse = answer["leads"][0]["plug_fuse"]
    assert fuse["response"] == "carries" and fuse["fusing_current_a"] == pytest.approx(24.7)
    assert fuse["non_fusing_current_a"] == pytest.approx(20.8)


def test_an_rlv_supply_above_110_v_is_refused(client):
    # BS 7671:2018, 411.8.1.2 (from memory): RLV is at most 110 V between lines
    body = {"supply": {**SOCKET, "system": "rlv_single_phase_cte"}, "leads": [{"length": "8 m", "size": "2.5 mm^2"}],
            "appliances": [{"rated_power": "500 W", "rated_voltage": "110 V"}]}
    assert pointers(client.post(URL, json=body)) == {"/supply/nominal_voltage"}


def test_an_rlv_supply_is_checked_at_its_voltage_to_earth(client):
    # BS 7671:2018, 411.8.1.2 and 411.8.3: U0 = 63.5 V for three-phase star, 5 s
    body = {"supply": {**SOCKET, "system": "rlv_three_phase_star", "nominal_voltage": "110 V", "rcd": None},
            "leads": [{"length": "8 m", "size": "2.5 mm^2"}],
            "appliances": [{"rated_power": "500 W", "rated_voltage": "110 V"}]}
    answer = client.post(URL, json=body).json()
    assert answer["fault"]["earth_fault_voltage_v"] == pytest.approx(63.5)
    assert answer["fault"]["earth_fault"]["required_disconnection_time_s"] == 5.0


@pytest.mark.parametrize("size, amps", [("14 AWG", 18.0), ("1.25 mm^2", 13.0)])
def test_awg_and_1_25_mm2_cords_are_analysed(client, size, amps):
    # NEC 2023 Table 400.5(A)(1) column B: 14 AWG 18 A; BS 7671:2018 Table 4F3A: 1.25 mm² 13 A
    body = {"supply": SOCKET, "leads": [{"length": "10 m", "size": size}], "appliances": [{"rated_power": "1 kW"}]}
    response = client.post(URL, json=body)
    assert response.status_code == 200, response.text
    assert response.json()["leads"][0]["rating"]["base_a"] == amps
