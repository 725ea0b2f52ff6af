/**
 * What a TypeScript caller should be able to rely on in the types openapi-typescript generates from the contract.
 * Compiled with `tsc --strict` beside caller.ts; nothing here runs. Each line marked `// check: <name>` must
 * compile: tests/clients/test_typescript_client.py reads tsc's errors by line and reports each check apart, so a
 * check that fails names the contract defect it stands for.
 */
import type { components } from "./schema.js";

type Schemas = components["schemas"];
/** true when T is a closed set of literals (an enum in the contract), false when any string is allowed. */
type Closed<T> = string extends NonNullable<T> ? false : true;
/** true when the field is always present and never null. */
type Always<T> = undefined extends T ? false : null extends T ? false : true;
/** true when the key is absent from the object type. */
type Lacks<O, K extends string> = K extends keyof O ? false : true;

// A request gives only the fields its scenario needs: a field with a default may be left out (the README's example).
export const minimalResistance: Schemas["RunResistanceRequest"] = { length: "30 m", size: "2.5 mm^2" }; // check: defaults_are_optional_in_requests

export const sizingRegime: Closed<Schemas["SizingResult"]["regime"]> = true; // check: regime_is_an_enum
export const checkObligation: Closed<Schemas["CheckOut"]["obligation"]> = true; // check: obligation_is_an_enum
export const deviceType: Closed<Schemas["DeviceOut"]["type"]> = true; // check: device_type_is_an_enum
export const conductorMaterial: Closed<Schemas["ConductorOut"]["material"]> = true; // check: material_is_an_enum
export const sizeSystem: Closed<Schemas["ConductorOut"]["size_system"]> = true; // check: size_system_is_an_enum
export const raceway: Closed<Schemas["RacewayFillOut"]["raceway"]> = true; // check: raceway_is_an_enum
export const conductorType: Closed<Schemas["CircuitIn"]["conductor_type"]> = true; // check: conductor_type_is_an_enum
export const problemType: Closed<Schemas["Problem"]["type"]> = true; // check: problem_type_is_an_enum

// Narrowing an element of a network answer on `type` gives that kind's own fields, present where always computed.
export const cableRunResistance: Always<Schemas["CableRunOut"]["resistance_ohm"]> = true; // check: element_kind_fields_are_required
export const cableRunHasNoLoadFields: Lacks<Schemas["CableRunOut"], "rated_power_drawn_pct"> = true; // check: element_kinds_hold_only_their_fields
