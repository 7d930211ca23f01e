/**
 * Resins and their rheology: flow curves, Cross-WLF / power-law viscosity, the SI material
 * type, the generic built-in library and Cross-WLF fitting.
 *
 * @module
 */
export * from "./flow_curve.ts";
export * from "./viscosity.ts";
export * from "./material.ts";
export * from "./library.ts";
export * from "./fit_cross_wlf.ts";
