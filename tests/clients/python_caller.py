"""Calls every operation of the contract through the Python client openapi-python-client generates from it.

Run by tests/clients/test_python_client.py against a real server, with the generated package `ampline_api_client`
importable (on PYTHONPATH) and, for `mypy --strict`, on MYPYPATH. Nothing here is hand-written HTTP: each call goes
through a generated typed function, each request body is a generated model (built field by field, or read from the
contract's own request examples with `from_dict`), and each answer is read through the typed result.

    python python_caller.py BASE_URL EXAMPLES_JSON [API_KEY]

EXAMPLES_JSON maps each operationId to one request example of the contract (the test extracts them from
openapi/v1/openapi.yaml at run time). With API_KEY the calls carry it as a Bearer token (keys on); without it they go
through a plain `Client`, as a caller of a server with keys off would. One line `ok <operationId> ...` per call;
exit 0 only when every call answered as the contract says.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path
from typing import Any, TypeAlias

from ampline_api_client import AuthenticatedClient, Client
from ampline_api_client.api.conductors import compute_run_resistance, list_conductors
from ampline_api_client.api.lead_chains import analyse_lead_chain
from ampline_api_client.api.meta import get_service_meta, get_table, list_tables
from ampline_api_client.api.networks import solve_network
from ampline_api_client.api.operations import get_liveness, get_readiness
from ampline_api_client.api.raceways import raceway_fill
from ampline_api_client.api.sizing import size_conductor, verify_conductor
from ampline_api_client.models import (
    CableRunOut,
    ConductorList,
    GetTableTableId,
    Health,
    LeadChainRequest,
    LeadChainResult,
    ListConductorsMaterialType1,
    ListConductorsSizeSystemType1,
    NetworkSolveRequest,
    NetworkSolveResult,
    Problem,
    RacewayFillRequest,
    RacewayFillResult,
    RunResistanceRequest,
    RunResistanceRequestConductorClass,
    RunResistanceRequestMaterial,
    RunResistanceResult,
    ServiceMeta,
    SizingRequest,
    SizingResult,
    SizingVerdict,
    TableDetail,
    TableList,
    VerifyRequest,
)

KEYS_REQUIRED_BY_TYPES = False
"""The test runs `mypy --strict` twice: with `--always-false` (a caller of a server with keys off passes a plain
`Client`, which the contract allows) and with `--always-true` (only `AuthenticatedClient`), so the rest of this file
is type-checked even while the generated functions demand an authenticated client."""

if KEYS_REQUIRED_BY_TYPES:
    AnyClient: TypeAlias = AuthenticatedClient
else:
    AnyClient: TypeAlias = AuthenticatedClient | Client


class Unexpected(Exception):
    """An answer that is not what the contract promises for the call."""


def connect(base_url: str, api_key: str | None) -> AnyClient:
    if api_key is None and not KEYS_REQUIRED_BY_TYPES:
        return Client(base_url=base_url, raise_on_unexpected_status=True)
    return AuthenticatedClient(base_url=base_url, token=api_key or "", raise_on_unexpected_status=True)


def check(condition: bool, what: str) -> None:
    if not condition:
        raise Unexpected(what)


def call_probes(client: AnyClient) -> None:
    live = get_liveness.sync(client=client)
    check(isinstance(live, Health), f"getLiveness answered {live!r}")
    assert isinstance(live, Health)
    print(f"ok getLiveness status={live.status}")
    ready = get_readiness.sync(client=client)
    check(isinstance(ready, Health), f"getReadiness answered {ready!r}")
    assert isinstance(ready, Health)
    print(f"ok getReadiness status={ready.status}")


def call_reference(client: AnyClient) -> None:
    meta = get_service_meta.sync(client=client)
    check(isinstance(meta, ServiceMeta), f"getServiceMeta answered {meta!r}")
    assert isinstance(meta, ServiceMeta)
    check(len(meta.tables) > 0, "getServiceMeta lists no tables")
    print(f"ok getServiceMeta api_version={meta.api_version} tables={len(meta.tables)}")
    listed = list_conductors.sync(client=client, material=ListConductorsMaterialType1.COPPER,
                                  size_system=ListConductorsSizeSystemType1.METRIC)
    check(isinstance(listed, ConductorList), f"listConductors answered {listed!r}")
    assert isinstance(listed, ConductorList)
    check(listed.count == len(listed.conductors) > 0, "listConductors count differs from its list")
    print(f"ok listConductors count={listed.count}")
    tables = list_tables.sync(client=client)
    check(isinstance(tables, TableList), f"listTables answered {tables!r}")
    assert isinstance(tables, TableList)
    check(tables.count == len(tables.tables) == len(meta.tables), "listTables count differs from its list or the meta")
    print(f"ok listTables count={tables.count}")
    table = get_table.sync(GetTableTableId.IEC60228_TABLE2, client=client)
    check(isinstance(table, TableDetail), f"getTable answered {table!r}")
    assert isinstance(table, TableDetail)
    row = next(r for r in table.rows if r[0] == 10)
    # IEC 60228:2004, Table 2: 10 mm², class 2, plain copper, at most 1.83 ohm/km at 20 °C.
    check(row[table.columns.index("copper_plain")] == 1.83, f"IEC 60228 Table 2 10 mm² row is {row}")
    print(f"ok getTable table={table.table_id} rows={table.row_count}")


def call_resistance(client: AnyClient) -> None:
    # Built field by field from the generated model and enums: the typing of a request body is what this shows.
    # A 38 m run of 10 mm² stranded copper at 20 °C (a scenario of our own).
    body = RunResistanceRequest(length="38 m", size="10 mm^2", material=RunResistanceRequestMaterial.COPPER,
                                conductor_class=RunResistanceRequestConductorClass.VALUE_2,
                                conductor_temperature="20 degC")
    result = compute_run_resistance.sync(client=client, body=body)
    check(isinstance(result, RunResistanceResult), f"computeRunResistance answered {result!r}")
    assert isinstance(result, RunResistanceResult)
    # IEC 60228:2004, Table 2: 10 mm², class 2, plain copper, at most 1.83 ohm/km at 20 °C.
    check(abs(result.resistance_ohm_per_m - 1.83e-3) < 1e-6, f"10 mm² at {result.resistance_ohm_per_m} ohm/m")
    check(abs(result.loop_ohm - 2 * 38 * result.resistance_ohm_per_m) < 1e-9, "loop is not twice the run")
    print(f"ok computeRunResistance loop_ohm={result.loop_ohm:.6g}")


def call_sizing(client: AnyClient, examples: dict[str, Any]) -> None:
    sized = size_conductor.sync(client=client, body=SizingRequest.from_dict(examples["sizeConductor"]))
    check(isinstance(sized, SizingResult), f"sizeConductor answered {sized!r}")
    assert isinstance(sized, SizingResult)
    check(isinstance(sized.verdict, SizingVerdict), "sizeConductor verdict is not the typed enum")
    size = sized.chosen.size_label if sized.chosen is not None else "none"
    print(f"ok sizeConductor verdict={sized.verdict.value} chosen={size}")
    verified = verify_conductor.sync(client=client, body=VerifyRequest.from_dict(examples["verifyConductor"]))
    check(isinstance(verified, SizingResult), f"verifyConductor answered {verified!r}")
    assert isinstance(verified, SizingResult)
    print(f"ok verifyConductor verdict={verified.verdict.value} checks={len(verified.chosen.checks) if verified.chosen else 0}")


def call_chain_network_fill(client: AnyClient, examples: dict[str, Any]) -> None:
    chain = analyse_lead_chain.sync(client=client, body=LeadChainRequest.from_dict(examples["analyseLeadChain"]))
    check(isinstance(chain, LeadChainResult), f"analyseLeadChain answered {chain!r}")
    assert isinstance(chain, LeadChainResult)
    print(f"ok analyseLeadChain verdict={chain.verdict.value} leads={len(chain.leads)}")
    network = solve_network.sync(client=client, body=NetworkSolveRequest.from_dict(examples["solveNetwork"]))
    check(isinstance(network, NetworkSolveResult), f"solveNetwork answered {network!r}")
    assert isinstance(network, NetworkSolveResult)
    check(network.converged, "solveNetwork did not converge on the contract's own example")
    runs = [e for e in network.elements if isinstance(e, CableRunOut)]  # the element union, narrowed by type
    print(f"ok solveNetwork analysis={network.analysis.value} elements={len(network.elements)} cable_runs={len(runs)}")
    fill = raceway_fill.sync(client=client, body=RacewayFillRequest.from_dict(examples["racewayFill"]))
    check(isinstance(fill, RacewayFillResult), f"racewayFill answered {fill!r}")
    assert isinstance(fill, RacewayFillResult)
    print(f"ok racewayFill raceway={fill.fill.raceway} trade_size={fill.fill.trade_size}")


def call_refused(client: AnyClient) -> None:
    # A mass given as a length: the contract's 422, read as the typed problem model.
    answer = compute_run_resistance.sync_detailed(client=client, body=RunResistanceRequest(length="25 kg", size="2.5 mm^2"))
    check(answer.status_code == 422, f"a length in kg answered {answer.status_code}")
    problem = answer.parsed
    check(isinstance(problem, Problem), f"the 422 is not a Problem: {problem!r}")
    assert isinstance(problem, Problem)
    pointers = [e.pointer for e in problem.errors] if isinstance(problem.errors, list) else []
    check(pointers == ["/length"], f"the 422 names {pointers}, not /length")
    print(f"ok problem-422 status={problem.status} type={problem.type_} pointer={pointers[0]}")


def main(argv: list[str]) -> int:
    base_url, examples_file = argv[0], Path(argv[1])
    api_key = argv[2] if len(argv) > 2 else None
    examples: dict[str, Any] = json.loads(examples_file.read_text(encoding="utf-8"))
    with connect(base_url, api_key) as client:
        try:
            call_probes(client)
            call_reference(client)
            call_resistance(client)
            call_sizing(client, examples)
            call_chain_network_fill(client, examples)
            call_refused(client)
        except Unexpected as failure:
            print(f"FAILED {failure}")
            return 1
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
