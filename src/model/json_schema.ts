import { z } from "zod";
import { ScenarioSchema } from "./scenario_schema.ts";

/** JSON Schema (draft 2020-12) of the scenario file, generated from the zod schema, for editors. */
export function scenarioJsonSchema(): Record<string, unknown> {
  const schema = z.toJSONSchema(ScenarioSchema, { io: "input", target: "draft-2020-12" });
  return { ...schema, title: "evenfill scenario (evenfill.scenario/1)" };
}
