/**
 * Pure SI physics: channel laws (tube, slit, non-circular, tapered, radial disk)
 * and thermal helpers (frozen layer, viscous heating, cooling times).
 *
 * @module
 */
export * from "./section.ts";
export * from "./channel_flow.ts";
export * from "./noncircular.ts";
export * from "./tapered_flow.ts";
export * from "./radial_flow.ts";
export * from "./thermal.ts";
