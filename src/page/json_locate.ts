/**
 * Find where a JSON path sits in the editor's text, so that a validation
 * message can be shown at the field it is about. A small strict JSON reader
 * (RFC 8259) records the text span of every key and value; a syntax error is
 * reported with its offset, line and column the same way in every browser.
 *
 * @module
 */

/** A text span: `start` inclusive, `end` exclusive; line and column are 1-based. */
export interface TextSpan {
  start: number;
  end: number;
  line: number;
  column: number;
}

/** Where one path's value (and its key, inside an object) sits. */
export interface PathSpan {
  value: TextSpan;
  key?: TextSpan;
}

/** The outcome of reading JSON text with positions. */
export type LocatedJson =
  | { ok: true; value: unknown; spans: Map<string, PathSpan> }
  | { ok: false; message: string; span: TextSpan };

/** The path as text, `gates[2].thickness_mm` (`$` for the root), as in the API's issues. */
export function pathKey(path: readonly (string | number)[]): string {
  if (path.length === 0) return "$";
  let text = "";
  for (const part of path) {
    if (typeof part === "number") text += `[${part}]`;
    else text += text === "" ? part : `.${part}`;
  }
  return text;
}

/** Line and column (1-based) of an offset. */
export function lineColumn(text: string, offset: number): { line: number; column: number } {
  return lineLocator(text)(offset);
}

/**
 * Line and column (1-based) of offsets in `text`: the line starts are found once, then
 * each offset is a binary search (a span per value would otherwise rescan the text).
 */
function lineLocator(text: string): (offset: number) => { line: number; column: number } {
  const starts = [0];
  for (let i = 0; i < text.length; i++) if (text.charCodeAt(i) === 10) starts.push(i + 1);
  return (offset) => {
    const end = Math.min(offset, text.length);
    let lo = 0;
    let hi = starts.length - 1;
    while (lo < hi) {
      const mid = (lo + hi + 1) >> 1;
      if (starts[mid] <= end) lo = mid;
      else hi = mid - 1;
    }
    return { line: lo + 1, column: end - starts[lo] + 1 };
  };
}

class JsonSyntaxError extends Error {
  constructor(message: string, readonly offset: number) {
    super(message);
  }
}

/** Read JSON text, recording the span of every value and key by path. */
export function locateJson(text: string): LocatedJson {
  const spans = new Map<string, PathSpan>();
  let i = 0;
  const locate = lineLocator(text);
  const span = (start: number, end: number): TextSpan => ({ start, end, ...locate(start) });
  const fail = (message: string, at = i): never => {
    throw new JsonSyntaxError(message, at);
  };
  const describe = (at: number) => at >= text.length ? "the end of the text" : `“${text[at]}”`;
  const skip = () => {
    while (i < text.length) {
      const c = text.charCodeAt(i);
      if (c === 32 || c === 9 || c === 10 || c === 13) i++;
      else break;
    }
  };
  const readString = (): string => {
    const start = i;
    i++; // opening quote
    let out = "";
    while (true) {
      if (i >= text.length) fail('A string is not closed: a quote “"” is missing', start);
      const c = text[i];
      if (c === '"') {
        i++;
        return out;
      }
      if (c === "\\") {
        const e = text[i + 1];
        const simple: Record<string, string> = {
          '"': '"',
          "\\": "\\",
          "/": "/",
          b: "\b",
          f: "\f",
          n: "\n",
          r: "\r",
          t: "\t",
        };
        if (e !== undefined && e in simple) {
          out += simple[e];
          i += 2;
        } else if (e === "u" && /^[0-9a-fA-F]{4}$/.test(text.slice(i + 2, i + 6))) {
          out += String.fromCharCode(parseInt(text.slice(i + 2, i + 6), 16));
          i += 6;
        } else fail("Unknown escape in a string", i);
        continue;
      }
      if (text.charCodeAt(i) < 32) fail("A line break or control character inside a string", i);
      out += c;
      i++;
    }
  };
  const readValue = (path: (string | number)[], key?: TextSpan): unknown => {
    skip();
    const start = i;
    let value: unknown;
    const c = text[i];
    if (c === "{") {
      i++;
      const obj: Record<string, unknown> = {};
      skip();
      if (text[i] === "}") i++;
      else {
        while (true) {
          skip();
          if (text[i] !== '"') {
            fail(`Expected a quoted field name, found ${describe(i)}`);
          }
          const keyStart = i;
          const name = readString();
          const keySpan = span(keyStart, i);
          skip();
          if (text[i] !== ":") fail(`Expected “:” after "${name}", found ${describe(i)}`);
          i++;
          obj[name] = readValue([...path, name], keySpan);
          skip();
          if (text[i] === ",") {
            i++;
            continue;
          }
          if (text[i] === "}") {
            i++;
            break;
          }
          fail(`Expected “,” or “}” after the value of "${name}", found ${describe(i)}`);
        }
      }
      value = obj;
    } else if (c === "[") {
      i++;
      const arr: unknown[] = [];
      skip();
      if (text[i] === "]") i++;
      else {
        while (true) {
          arr.push(readValue([...path, arr.length]));
          skip();
          if (text[i] === ",") {
            i++;
            continue;
          }
          if (text[i] === "]") {
            i++;
            break;
          }
          fail(`Expected “,” or “]” in a list, found ${describe(i)}`);
        }
      }
      value = arr;
    } else if (c === '"') {
      value = readString();
    } else {
      const m = /^-?(0|[1-9]\d*)(\.\d+)?([eE][+-]?\d+)?/.exec(text.slice(i, i + 64));
      if (m && m[0].length > 0 && text[i] !== undefined && /[-0-9]/.test(text[i])) {
        value = Number(m[0]);
        i += m[0].length;
      } else if (text.startsWith("true", i)) {
        value = true;
        i += 4;
      } else if (text.startsWith("false", i)) {
        value = false;
        i += 5;
      } else if (text.startsWith("null", i)) {
        value = null;
        i += 4;
      } else {
        fail(`Expected a value, found ${describe(i)}`);
      }
    }
    spans.set(pathKey(path), { value: span(start, i), ...(key ? { key } : {}) });
    return value;
  };
  try {
    const value = readValue([]);
    skip();
    if (i < text.length) fail(`Unexpected ${describe(i)} after the end of the JSON value`);
    return { ok: true, value, spans };
  } catch (error) {
    if (error instanceof JsonSyntaxError) {
      const at = Math.min(error.offset, text.length);
      return { ok: false, message: error.message, span: span(at, Math.min(at + 1, text.length)) };
    }
    throw error;
  }
}

/**
 * The span an issue at `path` should point at: the field's key and value if
 * it exists, else the nearest enclosing value that does (a missing field is
 * reported at its parent object).
 */
export function spanForPath(
  spans: Map<string, PathSpan>,
  path: readonly (string | number)[],
): TextSpan {
  for (let n = path.length; n >= 0; n--) {
    const found = spans.get(pathKey(path.slice(0, n)));
    if (found) {
      if (found.key) {
        return { ...found.key, end: found.value.end };
      }
      return found.value;
    }
  }
  return { start: 0, end: 0, line: 1, column: 1 };
}
