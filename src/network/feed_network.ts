import type { Section } from "../physics/section.ts";

/**
 * The feed system as a graph in SI units: nodes, and elements (feed, runner,
 * gate, cavity) with the geometry their channel law needs. Built once from a
 * validated scenario by `buildNetwork`; the fill simulation only reads it.
 *
 * @module
 */

/** What an element is in the mold. */
export type ElementKind = "feed" | "runner" | "gate" | "cavity";

/** Flow geometry of an element (all SI: m). */
export type ElementGeometry =
  | { type: "uniform"; section: Section; length: number }
  | { type: "tapered"; entry: Section; exit: Section; length: number }
  | { type: "strip"; width: number; gap: number; flowLength: number }
  | { type: "radial"; gap: number; gateRadius: number; maxRadius: number };

/** A node of the network; cavity inlets and the injection point are nodes too. */
export interface NetworkNode {
  /** Scenario node id, `inlet` for the injection point, or the cavity id for a cavity's inlet. */
  readonly id: string;
  readonly index: number;
  /** Position on the parting plane, m (cavity and inlet nodes take a nearby position). */
  readonly x: number;
  readonly y: number;
  readonly role: "inlet" | "junction" | "cavity";
}

/** One element between two nodes. A cavity element runs from its inlet node to its flow front. */
export interface NetworkElement {
  readonly id: string;
  readonly index: number;
  readonly kind: ElementKind;
  readonly from: number;
  /** Downstream node; -1 for a cavity (its far end is the flow front). */
  readonly to: number;
  readonly geometry: ElementGeometry;
  /** Channel (or cavity) volume, m³. */
  readonly volume: number;
  /** True for a hot drop: it never freezes and keeps the tip temperature. */
  readonly heated: boolean;
  /** Area projected on the parting plane that melt pressure acts on, m² (0 for sprue / hot drop). */
  readonly projectedArea: number;
  /** Wall (cavity) or characteristic thickness for freeze estimates, m. */
  readonly thickness: number;
  /** Index into `cavities` for cavity elements and gates (the cavity the gate feeds), else -1. */
  readonly cavity: number;
}

/** A cavity: its element and the gates that feed it. */
export interface NetworkCavity {
  readonly id: string;
  readonly name: string;
  readonly element: number;
  readonly gates: readonly number[];
  readonly volume: number;
  readonly projectedArea: number;
  readonly wall: number;
}

/** The whole feed system. */
export interface FeedNetwork {
  readonly nodes: readonly NetworkNode[];
  readonly elements: readonly NetworkElement[];
  readonly cavities: readonly NetworkCavity[];
  /** Index of the injection point (upstream end of the sprue or hot drop). */
  readonly inlet: number;
  /** Index of the feed element. */
  readonly feed: number;
  /** Volume of feed + runners + gates, m³ (the cold part of it is what is regrind per shot). */
  readonly feedSystemVolume: number;
  /** Volume of the cold feed system only (sprue, runners, gates; not a hot drop), m³. */
  readonly coldRunnerVolume: number;
  /** Cavity volume, m³. */
  readonly cavityVolume: number;
}
