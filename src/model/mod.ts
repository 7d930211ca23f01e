/**
 * Wire formats (zod schemas), units, and parsing with issue lists.
 *
 * @module
 */
export * from "./units.ts";
export * from "./material_schema.ts";
export * from "./scenario_schema.ts";
export * from "./parse_scenario.ts";
export * from "./json_schema.ts";
