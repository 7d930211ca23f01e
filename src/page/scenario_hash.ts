/**
 * A short check code of a scenario's content, so a result knows the scenario it came from:
 * FNV-1a (Fowler–Noll–Vo, 32-bit variant "1a", public domain; offset basis 2166136261, prime
 * 16777619) over the JSON re-serialised without layout, run twice with different seeds for 16
 * hex digits. Tidying the text does not change it; any change of a value does. A text that is
 * not JSON is hashed as it stands.
 *
 * @module
 */

function fnv1a(text: string, seed: number): number {
  let h = seed >>> 0;
  for (let k = 0; k < text.length; k++) {
    h ^= text.charCodeAt(k);
    h = Math.imul(h, 16777619) >>> 0;
  }
  return h >>> 0;
}

/** The scenario's content without its layout (indentation, spaces), or the text itself. */
export function canonicalScenario(text: string): string {
  try {
    return JSON.stringify(JSON.parse(text));
  } catch {
    return text;
  }
}

/** 16 hex digits identifying a scenario's content. */
export function scenarioHash(text: string): string {
  const c = canonicalScenario(text);
  return fnv1a(c, 2166136261).toString(16).padStart(8, "0") +
    fnv1a(c, 0x9e3779b9).toString(16).padStart(8, "0");
}
