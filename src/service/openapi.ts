import { z } from "zod";
import { scenarioJsonSchema } from "../model/json_schema.ts";
import * as wire from "../wire/mod.ts";
import * as api from "./api_schema.ts";

type Schema = Record<string, unknown>;

const JSON_SCHEMA = { target: "draft-2020-12", unrepresentable: "any" } as const;

/** The API's zod schemas, by component name; one nested in another becomes a `$ref`. */
const COMPONENTS: Record<string, z.ZodType> = {
  Error: api.ErrorSchema,
  Issue: api.IssueSchema,
  Health: api.HealthSchema,
  MaterialList: api.MaterialListSchema,
  DemoList: api.DemoListSchema,
  ScenarioHead: api.ScenarioHeadSchema,
  ScenarioList: api.ScenarioListSchema,
  SavedScenario: api.SavedScenarioSchema,
  RevisionList: api.RevisionListSchema,
  Revision: api.RevisionSchema,
  Validation: api.ValidationSchema,
  Result: wire.ResultSchema,
  Optimization: wire.OptimizationSchema,
  Calibration: wire.CalibrationSchema,
  CalibrationFactor: wire.CalibrationFactorSchema,
  Window: wire.WindowJobSchema,
  WindowRange: wire.WindowRangeSchema,
  StageProgress: wire.StageProgressSchema,
  Mode: wire.ModeSchema,
  SlopeSource: wire.SlopeSourceSchema,
  JobKind: wire.JobKindSchema,
  JobStatus: wire.JobStatusSchema,
  JobError: wire.JobErrorSchema,
  JobProgress: wire.JobProgressSchema,
  JobStateEvent: wire.JobStateEventSchema,
  JobEndEvent: wire.JobEndEventSchema,
  JobAccepted: api.JobAcceptedSchema,
  JobSummary: api.JobSummarySchema,
  JobList: api.JobListSchema,
  Job: api.JobSchema,
  Cancel: api.CancelSchema,
};

/** Each component's JSON Schema (draft 2020-12), generated from its zod schema. */
export function componentSchemas(): Record<string, Schema> {
  const registry = z.registry<{ id: string }>();
  for (const [id, schema] of Object.entries(COMPONENTS)) registry.add(schema, { id });
  const generated = z.toJSONSchema(registry, {
    ...JSON_SCHEMA,
    io: "output",
    uri: (id) => `#/components/schemas/${id}`,
  }).schemas as Record<string, Schema>;
  const submit = z.toJSONSchema(api.JobSubmitSchema, { ...JSON_SCHEMA, io: "input" }) as Schema;
  const schemas: Record<string, Schema> = { ...generated, JobSubmit: submit };
  for (const schema of Object.values(schemas)) {
    delete schema.$schema;
    delete schema.$id;
  }
  return schemas;
}

const ref = (name: string) => ({ $ref: `#/components/schemas/${name}` });
const jsonContent = (name: string) => ({ "application/json": { schema: ref(name) } });
const ok = (description: string, name: string) => ({ description, content: jsonContent(name) });
const error = (description: string) => ({ description, content: jsonContent("Error") });
const idParam = (name: string, description: string) => ({
  name,
  in: "path",
  required: true,
  description,
  schema: { type: "string" },
});

/**
 * The OpenAPI 3.1 document of the service, its schemas generated from the zod
 * schemas of the wire formats (`wire/`), of the API (`api_schema.ts`) and of the scenario.
 */
export function openApiDocument(version: string): Schema {
  const schemas: Record<string, Schema> = {
    ...componentSchemas(),
    Scenario: (() => {
      const s = { ...scenarioJsonSchema() };
      delete s.$schema;
      return s;
    })(),
  };
  const scenarioBody = {
    required: true,
    content: { "application/json": { schema: ref("Scenario") } },
  };
  const write = { security: [{ bearer: [] }] };
  const invalid = error("invalid JSON or scenario (issues with JSON paths)");
  const tooLarge = error("body over the size limit");
  const notFound = error("unknown id");
  const scenarioId = idParam("id", "saved scenario id");
  const jobId = idParam("id", "job id");
  const document = {
    openapi: "3.1.0",
    info: {
      title: "evenfill service",
      version,
      description:
        "Runner balancing for multi-cavity injection molds: simulate scenarios, save them with revisions, " +
        "and run balancing optimizations as background jobs. Errors are always {error: {code, message, issues?}}. " +
        "Any request may also get 403 forbidden_host (a host name the service does not answer to), a write 403 " +
        "forbidden_origin (another site's Origin), and a store access 503 store_busy with Retry-After (the database " +
        "is locked by another process; nothing was changed).",
    },
    servers: [{ url: "/" }],
    components: {
      schemas,
      securitySchemes: {
        bearer: {
          type: "http",
          scheme: "bearer",
          description:
            "Required when EVENFILL_TOKEN is set (always off loopback) on every write and on every read of saved scenarios and jobs.",
        },
      },
    },
    paths: {
      "/api/health": {
        get: { summary: "Liveness, queue and workers", responses: { 200: ok("ok", "Health") } },
      },
      "/api/materials": {
        get: {
          summary: "The generic resin library",
          responses: { 200: ok("materials", "MaterialList") },
        },
      },
      "/api/demos": {
        get: { summary: "Demo scenarios", responses: { 200: ok("demos", "DemoList") } },
      },
      "/api/demos/{id}": {
        get: {
          summary: "One demo scenario's JSON",
          parameters: [idParam("id", "file stem of scenarios/*.json")],
          responses: { 200: ok("the scenario", "Scenario"), 404: notFound },
        },
      },
      "/api/scenarios": {
        get: { summary: "Saved scenarios", responses: { 200: ok("list", "ScenarioList") } },
        post: {
          ...write,
          summary: "Save a new scenario (revision 1)",
          requestBody: scenarioBody,
          responses: { 201: ok("saved", "ScenarioHead"), 400: invalid, 413: tooLarge },
        },
      },
      "/api/scenarios/{id}": {
        get: {
          summary: "A saved scenario, latest revision",
          parameters: [scenarioId],
          responses: { 200: ok("scenario", "SavedScenario"), 404: notFound },
        },
        put: {
          ...write,
          summary: "Save a new revision",
          parameters: [scenarioId],
          requestBody: scenarioBody,
          responses: {
            200: ok("saved", "ScenarioHead"),
            400: invalid,
            404: notFound,
            413: tooLarge,
          },
        },
        delete: {
          ...write,
          summary: "Delete a scenario and its history",
          parameters: [scenarioId],
          responses: { 204: { description: "deleted" }, 404: notFound },
        },
      },
      "/api/scenarios/{id}/revisions": {
        get: {
          summary: "Revision history",
          parameters: [scenarioId],
          responses: { 200: ok("revisions", "RevisionList"), 404: notFound },
        },
      },
      "/api/scenarios/{id}/revisions/{rev}": {
        get: {
          summary: "One revision",
          parameters: [scenarioId, {
            ...idParam("rev", "revision number"),
            schema: { type: "integer" },
          }],
          responses: { 200: ok("revision", "Revision"), 404: notFound },
        },
      },
      "/api/validate": {
        post: {
          ...write,
          summary: "Validate a scenario",
          requestBody: scenarioBody,
          responses: {
            200: ok("ok or the issues", "Validation"),
            400: error("not JSON"),
            413: tooLarge,
          },
        },
      },
      "/api/simulate": {
        post: {
          ...write,
          summary: "Simulate a scenario synchronously (bounded size and time)",
          parameters: [{
            name: "history",
            in: "query",
            required: false,
            schema: { type: "string", enum: ["1"] },
          }],
          requestBody: scenarioBody,
          responses: {
            200: ok("evenfill.result/1", "Result"),
            400: invalid,
            413: error("body or network over the size limit"),
            422: error("simulation_failed or simulation_time_limit"),
            429: error("every simulation worker busy and the waiting line full; see Retry-After"),
          },
        },
      },
      "/api/jobs": {
        get: { summary: "Recent jobs", responses: { 200: ok("jobs", "JobList") } },
        post: {
          ...write,
          summary:
            "Submit a job: optimize (balance the sizes), calibrate (fit the model to the scenario's weighed short shots) or window (sweep the process window)",
          requestBody: { required: true, content: jsonContent("JobSubmit") },
          responses: {
            202: ok("queued", "JobAccepted"),
            400: error(
              "invalid JSON, scenario, factors (an unknown gate or runner), measurements or second design (issues with JSON paths)",
            ),
            404: error("unknown scenario_id"),
            413: tooLarge,
            429: error("queue full; see Retry-After"),
          },
        },
      },
      "/api/jobs/{id}": {
        get: {
          summary: "A job's status, progress, result and error",
          parameters: [jobId],
          responses: { 200: ok("job", "Job"), 404: notFound },
        },
      },
      "/api/jobs/{id}/cancel": {
        post: {
          ...write,
          summary: "Cancel a job",
          parameters: [jobId],
          responses: { 202: ok("cancel requested", "Cancel"), 404: notFound },
        },
      },
      "/api/jobs/{id}/events": {
        get: {
          summary:
            "Server-Sent Events: `state` (JobStateEvent), `progress` (JobProgress), final `end` (JobEndEvent)",
          parameters: [jobId],
          responses: {
            200: {
              description:
                "event stream; each event's `data` is JSON, its schema by event name in x-event-data",
              content: {
                "text/event-stream": {
                  schema: { type: "string" },
                  "x-event-data": {
                    state: ref("JobStateEvent"),
                    progress: ref("JobProgress"),
                    end: ref("JobEndEvent"),
                  },
                },
              },
            },
            404: notFound,
          },
        },
      },
      "/api/openapi.json": {
        get: { summary: "This document", responses: { 200: { description: "OpenAPI 3.1" } } },
      },
    },
  };
  for (const [path, operations] of Object.entries(document.paths)) {
    for (const operation of Object.values(operations) as Record<string, unknown>[]) {
      const responses = operation.responses as Record<string, unknown>;
      if (path.startsWith("/api/scenarios") || path.startsWith("/api/jobs")) {
        operation.security = write.security;
      }
      if (operation.requestBody !== undefined) {
        responses[408] = error("the body did not arrive within the body timeout");
        responses[415] = error("the body is not declared application/json");
      }
      if (path === "/api/jobs/{id}/events") {
        responses[503] = error("too many event streams open; see Retry-After");
      }
    }
  }
  return document;
}
