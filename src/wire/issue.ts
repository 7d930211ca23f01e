/**
 * Issues: one problem in a scenario or a request, with its JSON path, a stable code
 * and plain words. The one JSON-path printer ({@link pathText}) and the one mapping
 * of the schema library's issues to them ({@link zodIssues}).
 *
 * @module
 */
import { z } from "zod";

/** A JSON path: object keys and array indices from the root. */
export type JsonPath = (string | number)[];

/** One problem, as every issue list on the wire carries it. */
export const IssueSchema = z.object({
  path: z.array(z.union([z.string(), z.number()])).describe(
    'JSON path of the offending field, e.g. ["gates", 2, "thickness_mm"]',
  ),
  at: z.string().describe("JSON path as text, e.g. gates[2].thickness_mm ($ for the root)"),
  code: z.string().describe("stable machine-readable code"),
  message: z.string().describe("what is wrong, in plain words"),
});

/** Every error body of the HTTP API: `{error: {code, message, issues?}}`. */
export const ErrorSchema = z.object({
  error: z.object({
    code: z.string().describe("stable machine-readable code"),
    message: z.string(),
    issues: z.array(IssueSchema).optional().describe("what was wrong with the body, at JSON paths"),
  }),
});
/** {@link ErrorSchema}. */
export type ApiError = z.infer<typeof ErrorSchema>;

/** One problem found in a scenario or a request: where (JSON path), a stable code, plain words. */
export type ScenarioIssue = z.infer<typeof IssueSchema>;

/** Render a JSON path as `a[0].b` (`$` for the root). */
export function pathText(path: readonly PropertyKey[]): string {
  if (path.length === 0) return "$";
  let text = "";
  for (const part of path) {
    if (typeof part === "number") text += `[${part}]`;
    else text += text === "" ? String(part) : `.${String(part)}`;
  }
  return text;
}

/** An issue at `path`, its text form filled in. */
export function scenarioIssue(path: JsonPath, code: string, message: string): ScenarioIssue {
  return { path, at: pathText(path), code, message };
}

/** Options of {@link zodIssues}. */
export interface ZodIssuesOptions {
  /** Prepended to every issue's path (default none: the parsed value is the root). */
  prefix?: JsonPath;
  /**
   * Fixed words for a union field whose alternatives' own messages would not help, by
   * field name (the last key of its path), e.g. `injection`.
   */
  unionWords?: Readonly<Record<string, { code: string; message: string }>>;
  /** Words for a union field none of whose alternatives came close, by field name. */
  unionFallback?: Readonly<Record<string, { code: string; message: string }>>;
  /** Appended to the message of unknown fields, e.g. where the fields are listed. */
  unknownFieldsHint?: string;
}

type ZodIssueLike = {
  code: string;
  path: PropertyKey[];
  message: string;
  expected?: string;
  received?: string;
  keys?: string[];
  errors?: ZodIssueLike[][];
};

/**
 * The schema library's issues in plain words, their paths absolute: of a union,
 * the alternative that came closest in its own words (or the discriminator's
 * allowed values); a missing field as missing; an unknown field by name.
 */
export function zodIssues(error: z.ZodError, options: ZodIssuesOptions = {}): ScenarioIssue[] {
  return (error.issues as unknown as ZodIssueLike[]).flatMap((i) =>
    plainIssues(i, options.prefix ?? [], options)
  );
}

function plainIssues(
  i: ZodIssueLike,
  prefix: JsonPath,
  options: ZodIssuesOptions,
): ScenarioIssue[] {
  const path: JsonPath = [
    ...prefix,
    ...i.path.map((p) => (typeof p === "symbol" ? String(p) : p)),
  ];
  const last = path[path.length - 1];
  const name = String(last);
  if (i.code === "invalid_union") {
    const fixed = options.unionWords?.[name];
    if (fixed) return [scenarioIssue(path, fixed.code, fixed.message)];
    const discriminator = /Expected (.*)$/.exec(i.message);
    if (discriminator && /discriminator/i.test(i.message)) {
      const allowed = discriminator[1].replaceAll("'", "").split(" | ").join(", ");
      return [scenarioIssue(path, "unknown_kind", `${name} must be one of ${allowed}`)];
    }
    // An alternative of the wrong type altogether (a string where an object was given) says
    // nothing; of the others, the closest (fewest problems) in its own words.
    const branches = (i.errors ?? []).filter((b) =>
      b.length > 0 && !(b.length === 1 && b[0].path.length === 0 && b[0].code === "invalid_type")
    );
    if (branches.length > 0) {
      const closest = branches.reduce((a, b) => (b.length < a.length ? b : a));
      return closest.flatMap((inner) => plainIssues(inner, path, options));
    }
    const fallback = options.unionFallback?.[name];
    if (fallback) return [scenarioIssue(path, fallback.code, fallback.message)];
    return [
      scenarioIssue(
        path,
        i.code,
        `${String(last ?? "the scenario")} has none of the allowed forms`,
      ),
    ];
  }
  if (i.code === "invalid_type") {
    if (i.received === "undefined" || /received undefined/.test(i.message)) {
      return [scenarioIssue(path, "missing", `${name} is missing`)];
    }
    const expected = i.expected ?? /expected (\w+)/.exec(i.message)?.[1] ?? "another type";
    return [scenarioIssue(path, i.code, `${name} must be ${article(expected)} ${expected}`)];
  }
  if (i.code === "unrecognized_keys") {
    const keys = i.keys ?? [];
    const hint = options.unknownFieldsHint ? ` ${options.unknownFieldsHint}` : "";
    return [scenarioIssue(
      path,
      i.code,
      `unknown field${keys.length === 1 ? "" : "s"} ${keys.map((k) => `"${k}"`).join(", ")}${hint}`,
    )];
  }
  return [scenarioIssue(path, i.code, i.message.replace(/^Invalid input: /, ""))];
}

function article(word: string): string {
  return /^[aeiou]/.test(word) ? "an" : "a";
}
