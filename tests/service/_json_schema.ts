/**
 * A small JSON Schema (draft 2020-12) validator for the subset the OpenAPI document
 * uses: local `$ref`, `type`, `properties`, `required`, `additionalProperties`, `items`,
 * `prefixItems`, `enum`, `const`, `anyOf`, `oneOf`, `allOf`, `minimum`, `maximum`,
 * `exclusiveMinimum`, `exclusiveMaximum`, `minItems`, `maxItems`, `minLength`,
 * `maxLength`, `pattern`. Any other keyword that constrains a value is refused, so a
 * schema the validator does not understand fails the test instead of passing silently.
 *
 * @module
 */

type Schema = Record<string, unknown> | boolean;

/** Keywords that only annotate. */
const ANNOTATIONS = new Set([
  "description",
  "title",
  "default",
  "examples",
  "$comment",
  "$id",
  "$schema",
  "$defs",
  "definitions",
  "readOnly",
  "writeOnly",
  "deprecated",
  "format",
  "id",
]);

const HANDLED = new Set([
  "$ref",
  "type",
  "properties",
  "required",
  "additionalProperties",
  "items",
  "prefixItems",
  "enum",
  "const",
  "anyOf",
  "oneOf",
  "allOf",
  "minimum",
  "maximum",
  "exclusiveMinimum",
  "exclusiveMaximum",
  "minItems",
  "maxItems",
  "minLength",
  "maxLength",
  "pattern",
]);

function typeOf(value: unknown): string {
  if (value === null) return "null";
  if (Array.isArray(value)) return "array";
  if (typeof value === "number") return Number.isInteger(value) ? "integer" : "number";
  return typeof value;
}

function fitsType(value: unknown, type: string): boolean {
  const actual = typeOf(value);
  return actual === type || (type === "number" && actual === "integer");
}

function equal(a: unknown, b: unknown): boolean {
  return JSON.stringify(a) === JSON.stringify(b);
}

/** Resolve a local reference (`#/components/schemas/Result`) in `root`. */
export function resolveRef(root: unknown, ref: string): Schema {
  if (!ref.startsWith("#/")) throw new Error(`only local $refs are supported: ${ref}`);
  let node: unknown = root;
  for (const part of ref.slice(2).split("/")) {
    const key = part.replaceAll("~1", "/").replaceAll("~0", "~");
    node = (node as Record<string, unknown>)?.[key];
    if (node === undefined) throw new Error(`unresolved $ref ${ref}`);
  }
  return node as Schema;
}

/**
 * The problems of `value` against `schema` (empty when it validates), each as
 * `path: what`; `root` is the document local references resolve in.
 */
export function validate(value: unknown, schema: Schema, root: unknown, path = "$"): string[] {
  if (schema === true) return [];
  if (schema === false) return [`${path}: no value allowed`];
  for (const key of Object.keys(schema)) {
    if (!HANDLED.has(key) && !ANNOTATIONS.has(key) && !key.startsWith("x-")) {
      throw new Error(`the test's validator does not know the keyword "${key}" (at ${path})`);
    }
  }
  const errors: string[] = [];
  const s = schema as Record<string, unknown>;
  if (typeof s.$ref === "string") {
    errors.push(...validate(value, resolveRef(root, s.$ref), root, path));
  }
  if (s.type !== undefined) {
    const types = Array.isArray(s.type) ? s.type as string[] : [s.type as string];
    if (!types.some((t) => fitsType(value, t))) {
      return [...errors, `${path}: expected ${types.join(" or ")}, got ${typeOf(value)}`];
    }
  }
  if (s.enum !== undefined && !(s.enum as unknown[]).some((e) => equal(e, value))) {
    errors.push(`${path}: ${JSON.stringify(value)} is not one of ${JSON.stringify(s.enum)}`);
  }
  if ("const" in s && !equal(s.const, value)) {
    errors.push(`${path}: expected ${JSON.stringify(s.const)}, got ${JSON.stringify(value)}`);
  }
  if (typeof value === "number") {
    if (typeof s.minimum === "number" && value < s.minimum) errors.push(`${path}: below minimum`);
    if (typeof s.maximum === "number" && value > s.maximum) errors.push(`${path}: above maximum`);
    if (typeof s.exclusiveMinimum === "number" && value <= s.exclusiveMinimum) {
      errors.push(`${path}: not above exclusiveMinimum`);
    }
    if (typeof s.exclusiveMaximum === "number" && value >= s.exclusiveMaximum) {
      errors.push(`${path}: not below exclusiveMaximum`);
    }
  }
  if (typeof value === "string") {
    if (typeof s.minLength === "number" && value.length < s.minLength) {
      errors.push(`${path}: shorter than ${s.minLength}`);
    }
    if (typeof s.maxLength === "number" && value.length > s.maxLength) {
      errors.push(`${path}: longer than ${s.maxLength}`);
    }
    if (typeof s.pattern === "string" && !new RegExp(s.pattern, "u").test(value)) {
      errors.push(`${path}: does not match ${s.pattern}`);
    }
  }
  if (Array.isArray(value)) {
    const prefix = (s.prefixItems ?? []) as Schema[];
    prefix.forEach((p, i) => {
      if (i < value.length) errors.push(...validate(value[i], p, root, `${path}[${i}]`));
    });
    if (s.items !== undefined) {
      for (let i = prefix.length; i < value.length; i++) {
        errors.push(...validate(value[i], s.items as Schema, root, `${path}[${i}]`));
      }
    }
    if (typeof s.minItems === "number" && value.length < s.minItems) {
      errors.push(`${path}: fewer than ${s.minItems} items`);
    }
    if (typeof s.maxItems === "number" && value.length > s.maxItems) {
      errors.push(`${path}: more than ${s.maxItems} items`);
    }
  }
  if (typeOf(value) === "object") {
    const object = value as Record<string, unknown>;
    const properties = (s.properties ?? {}) as Record<string, Schema>;
    for (const key of (s.required ?? []) as string[]) {
      if (!(key in object)) errors.push(`${path}: missing ${key}`);
    }
    for (const [key, v] of Object.entries(object)) {
      if (key in properties) errors.push(...validate(v, properties[key], root, `${path}.${key}`));
      else if (s.additionalProperties !== undefined) {
        errors.push(...validate(v, s.additionalProperties as Schema, root, `${path}.${key}`));
      }
    }
  }
  if (Array.isArray(s.allOf)) {
    for (const sub of s.allOf as Schema[]) errors.push(...validate(value, sub, root, path));
  }
  if (Array.isArray(s.anyOf)) {
    const each = (s.anyOf as Schema[]).map((sub) => validate(value, sub, root, path));
    if (!each.some((e) => e.length === 0)) {
      errors.push(...each.reduce((a, b) => (b.length < a.length ? b : a)));
    }
  }
  if (Array.isArray(s.oneOf)) {
    const passing = (s.oneOf as Schema[]).filter((sub) =>
      validate(value, sub, root, path).length === 0
    ).length;
    if (passing !== 1) errors.push(`${path}: matches ${passing} of oneOf, not exactly 1`);
  }
  return errors;
}
