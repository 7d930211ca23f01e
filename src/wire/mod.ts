/**
 * The wire formats the service, the worker, the store, the CLI and the page share,
 * each fact in one place: zod schemas and the TypeScript types inferred from them
 * for the result (`evenfill.result/1`) and optimization (`evenfill.optimization/1`)
 * JSON, job progress and events, issues, and the shared enumerations. The report
 * builds values of these types, the OpenAPI document is generated from these
 * schemas. Imports nothing of evenfill's: every folder may import it, the page too.
 *
 * @module
 */
export * from "./enums.ts";
export * from "./issue.ts";
export * from "./result.ts";
export * from "./optimization.ts";
export * from "./job.ts";
export * from "./window.ts";
export * from "./calibration.ts";
