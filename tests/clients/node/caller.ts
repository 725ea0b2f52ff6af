/**
 * Calls every operation of the contract through openapi-fetch, typed by the `paths` that openapi-typescript
 * generates from openapi/v1/openapi.yaml (schema.d.ts beside this file in the test's build folder).
 *
 * Run by tests/clients/test_typescript_client.py: compiled with `tsc --strict`, then run with node against a real
 * server. Environment: AMPLINE_BASE_URL, AMPLINE_EXAMPLES (a JSON file mapping each operationId to one request
 * example of the contract, extracted by the test at run time) and, with keys on, AMPLINE_API_KEY.
 * One line `ok <operationId> ...` per call; exit code 0 only when every answer is what the contract says.
 */
import { readFileSync } from "node:fs";
import createClient from "openapi-fetch";
import type { components, paths } from "./schema.js";

type Schemas = components["schemas"];

class Unexpected extends Error {}

function check(condition: boolean, what: string): asserts condition {
  if (!condition) throw new Unexpected(what);
}

function required(name: string): string {
  const value = process.env[name];
  check(value !== undefined && value !== "", `${name} is not set`);
  return value;
}

const apiKey = process.env.AMPLINE_API_KEY;
const client = createClient<paths>({
  baseUrl: required("AMPLINE_BASE_URL"),
  headers: apiKey ? { authorization: `Bearer ${apiKey}` } : {},
});
// The contract's own request examples: JSON read at run time, so its type is the contract's word, not checked here.
const examples = JSON.parse(readFileSync(required("AMPLINE_EXAMPLES"), "utf8")) as Record<string, unknown>;

async function probes(): Promise<void> {
  const live = await client.GET("/healthz");
  check(live.data !== undefined, `getLiveness answered ${live.response.status}`);
  console.log(`ok getLiveness status=${live.data.status}`);
  const ready = await client.GET("/readyz");
  check(ready.data !== undefined, `getReadiness answered ${ready.response.status}`);
  console.log(`ok getReadiness status=${ready.data.status}`);
}

async function reference(): Promise<void> {
  const meta = await client.GET("/v1/meta");
  check(meta.data !== undefined, `getServiceMeta answered ${meta.response.status}`);
  check(meta.data.tables.length > 0, "getServiceMeta lists no tables");
  console.log(`ok getServiceMeta api_version=${meta.data.api_version} tables=${meta.data.tables.length}`);
  const listed = await client.GET("/v1/conductors", {
    params: { query: { material: "aluminium", size_system: "awg" } },
  });
  check(listed.data !== undefined, `listConductors answered ${listed.response.status}`);
  check(listed.data.count === listed.data.conductors.length && listed.data.count > 0, "listConductors count differs");
  check(listed.data.conductors.every((c) => c.material === "aluminium"), "listConductors ignored its filter");
  console.log(`ok listConductors count=${listed.data.count}`);
  const tables = await client.GET("/v1/tables");
  check(tables.data !== undefined, `listTables answered ${tables.response.status}`);
  check(tables.data.count === tables.data.tables.length && tables.data.count === meta.data.tables.length,
    "listTables count differs from its list or the meta");
  console.log(`ok listTables count=${tables.data.count}`);
  const table = await client.GET("/v1/tables/{table_id}", { params: { path: { table_id: "nec-ch9-table8" } } });
  check(table.data !== undefined, `getTable answered ${table.response.status}`);
  const columns = table.data.columns;
  check(table.data.rows.every((r) => r.length === columns.length), "getTable rows and columns differ");
  const row = table.data.rows.find((r) => r[columns.indexOf("size")] === "6" && r[columns.indexOf("stranding")] === "stranded");
  // NFPA 70-2023, Chapter 9, Table 8: 6 AWG stranded uncoated copper, 0.491 ohm/kFT at 75 °C.
  check(row !== undefined && row[columns.indexOf("copper_uncoated")] === 0.491, `Table 8 6 AWG row is ${JSON.stringify(row)}`);
  console.log(`ok getTable table=${table.data.table_id} rows=${table.data.row_count}`);
}

async function resistance(): Promise<void> {
  // A typed literal body (a scenario of our own): 55 m of 6 AWG stranded copper at 75 °C.
  const body: Schemas["RunResistanceRequest"] = {
    length: "55 m", size: "6 AWG", material: "copper", conductor_class: 2, conductor_temperature: "75 degC",
  };
  const result = await client.POST("/v1/conductors/resistance", { body });
  check(result.data !== undefined, `computeRunResistance answered ${result.response.status}`);
  // NFPA 70-2023, Chapter 9, Table 8: 6 AWG stranded uncoated copper, 0.491 ohm/kFT at 75 °C (1 kFT = 304.8 m).
  const perMetre = result.data.resistance_ohm_per_m;
  check(Math.abs(perMetre - 0.491 / 304.8) < 0.005 * perMetre, `6 AWG at ${perMetre} ohm/m`);
  check(Math.abs(result.data.loop_ohm - 2 * 55 * result.data.resistance_ohm_per_m) < 1e-9, "loop is not twice the run");
  console.log(`ok computeRunResistance loop_ohm=${result.data.loop_ohm.toPrecision(6)}`);
}

async function sizing(): Promise<void> {
  const sized = await client.POST("/v1/conductors/size", {
    body: examples.sizeConductor as Schemas["SizingRequest"],
  });
  check(sized.data !== undefined, `sizeConductor answered ${sized.response.status}`);
  const verdict: Schemas["SizingResult"]["verdict"] = sized.data.verdict;
  console.log(`ok sizeConductor verdict=${verdict} chosen=${sized.data.chosen?.size_label ?? "none"}`);
  const verified = await client.POST("/v1/conductors/verify", {
    body: examples.verifyConductor as Schemas["VerifyRequest"],
  });
  check(verified.data !== undefined, `verifyConductor answered ${verified.response.status}`);
  const failing = verified.data.chosen?.checks.filter((c) => !c.passes).map((c) => c.code) ?? [];
  console.log(`ok verifyConductor verdict=${verified.data.verdict} failing=${failing.join(",") || "none"}`);
}

async function chainNetworkFill(): Promise<void> {
  const chain = await client.POST("/v1/lead-chains/analyse", {
    body: examples.analyseLeadChain as Schemas["LeadChainRequest"],
  });
  check(chain.data !== undefined, `analyseLeadChain answered ${chain.response.status}`);
  console.log(`ok analyseLeadChain verdict=${chain.data.verdict} leads=${chain.data.leads.length}`);
  const network = await client.POST("/v1/networks/solve", {
    body: examples.solveNetwork as Schemas["NetworkSolveRequest"],
  });
  check(network.data !== undefined, `solveNetwork answered ${network.response.status}`);
  check(network.data.converged, "solveNetwork did not converge on the contract's own example");
  const runs = network.data.elements.filter((e) => e.type === "cable_run");
  console.log(`ok solveNetwork analysis=${network.data.analysis} elements=${network.data.elements.length} cable_runs=${runs.length}`);
  const fill = await client.POST("/v1/raceways/fill", {
    body: examples.racewayFill as Schemas["RacewayFillRequest"],
  });
  check(fill.data !== undefined, `racewayFill answered ${fill.response.status}`);
  console.log(`ok racewayFill raceway=${fill.data.fill.raceway} trade_size=${fill.data.fill.trade_size ?? "none"}`);
}

async function refused(): Promise<void> {
  // A mass given as a length: the contract's 422, read through the typed error.
  const body: Schemas["RunResistanceRequest"] = {
    length: "25 kg", size: "2.5 mm^2", material: "copper", conductor_class: 2, conductor_temperature: 20,
  };
  const answer = await client.POST("/v1/conductors/resistance", { body });
  check(answer.response.status === 422 && answer.error !== undefined, `a length in kg answered ${answer.response.status}`);
  const problem: Schemas["Problem"] = answer.error;
  const pointers = (problem.errors ?? []).map((e) => e.pointer);
  check(pointers.length === 1 && pointers[0] === "/length", `the 422 names ${pointers.join(",")}, not /length`);
  console.log(`ok problem-422 status=${problem.status} type=${problem.type} pointer=${pointers[0]}`);
}

async function main(): Promise<number> {
  try {
    await probes();
    await reference();
    await resistance();
    await sizing();
    await chainNetworkFill();
    await refused();
  } catch (failure) {
    if (!(failure instanceof Unexpected)) throw failure;
    console.log(`FAILED ${failure.message}`);
    return 1;
  }
  return 0;
}

process.exitCode = await main();
