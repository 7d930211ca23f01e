/**
 * The feed system as a network: build from a scenario, steady hydraulic solve,
 * transient fill, freeze times and warnings.
 *
 * @module
 */
export * from "./feed_network.ts";
export * from "./build_network.ts";
export * from "./hydraulic_solve.ts";
export * from "./fill_result.ts";
export * from "./simulate_fill.ts";
export * from "./assess_fill.ts";
export * from "./simulate_scenario.ts";
