import { locateJson, spanForPath, type TextSpan } from "./json_locate.ts";
import type { ScenarioIssue as Issue } from "./wire.ts";

/**
 * Check the editor's text before anything is sent: JSON syntax here, in the
 * page (bad JSON never leaves it); the scenario schema and cross-references
 * are the service's (`POST /api/validate`, the one source of truth, and it
 * keeps zod's half a megabyte out of the page). Either way each issue is tied
 * to the span of its field.
 *
 * @module
 */

/** An issue with where it sits in the editor's text. */
export interface PlacedIssue extends Issue {
  span: TextSpan;
}

/** Result of checking the editor's text. */
export type EditorCheck =
  | { ok: true; value: unknown }
  | { ok: false; syntax: boolean; issues: PlacedIssue[]; value?: unknown };

/** Put issues (from the page or from the service) at their fields in `text`. */
export function placeIssues(text: string, issues: readonly Issue[]): PlacedIssue[] {
  const located = locateJson(text);
  const spans = located.ok ? located.spans : new Map();
  return issues
    .map((i) => ({ ...i, span: spanForPath(spans, i.path) }))
    .sort((a, b) => a.span.start - b.span.start);
}

/** Check the editor's JSON syntax; a syntax error becomes one issue at its line and column. */
export function checkJsonSyntax(text: string): EditorCheck {
  const located = locateJson(text);
  if (located.ok) return { ok: true, value: located.value };
  return {
    ok: false,
    syntax: true,
    issues: [{
      at: `line ${located.span.line}, column ${located.span.column}`,
      path: [],
      code: "invalid_json",
      message: located.message,
      span: located.span,
    }],
  };
}
