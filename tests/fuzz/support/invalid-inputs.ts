import querystring from 'node:querystring';
import fc from 'fast-check';
import type { z } from 'zod';

/**
 * Invalid request parts generated from the shared zod schemas: values shaped roughly like what the
 * schema wants (its keys, enum options, element types) mixed with wrong types and hostile strings,
 * kept only when the schema itself refuses them — so every input sent is invalid by the contract.
 */

/** Strings that have broken path handling, parsers or storage elsewhere (common practice in fuzzing). */
export const HOSTILE_STRINGS = [
  '', ' ', '..', '.', '../..', '../../etc/passwd', 'a/../b', '..\\..', '\\', '/', '//', '%2e%2e', '%2E%2E%2F', '..%2F', '%2F', '%5C', '%00', '\u0000',
  '..%00', '%252e%252e', 'runs/../../secret', 'null', 'undefined', 'NaN', '-1', '1e309', '0x10', '\u202e', '<script>', "'; drop table runs;--",
  '{"$ne":null}', 'é'.repeat(3), '😀', 'x'.repeat(5000),
];

/** The subset that is URL-safe as it stands, sent raw in a path so the server sees the bytes unchanged. */
export const RAW_PATH_STRINGS = ['..', '.', '%2e%2e', '%2E%2E', '..%2F..%2Fsecret', '%2F', '%5C', '%00', '..%00', '%252e%252e', '%E0%A4%A', '%', 'a%2Fb', '.%2e'];

type Def = { type: string; [k: string]: unknown };
const defOf = (s: z.ZodType): Def => (s as unknown as { _zod: { def: Def } })._zod.def;

export const hostileString = fc.oneof(
  { weight: 3, arbitrary: fc.constantFrom(...HOSTILE_STRINGS) },
  { weight: 2, arbitrary: fc.string({ maxLength: 40 }) },
  { weight: 1, arbitrary: fc.string({ unit: 'grapheme', maxLength: 20 }) },
  { weight: 1, arbitrary: fc.uuid() },
  { weight: 1, arbitrary: fc.integer().map(String) },
);

export const wrongValue: fc.Arbitrary<unknown> = fc.oneof(
  fc.constant(null),
  fc.boolean(),
  fc.integer(),
  fc.double(),
  fc.constantFrom(1e308, -1, 0, 2 ** 53 + 2, -(2 ** 31) - 1),
  hostileString,
  fc.array(fc.oneof(fc.integer(), fc.string({ maxLength: 5 }), fc.constant(null)), { maxLength: 4 }),
  fc.dictionary(fc.string({ maxLength: 6 }), fc.oneof(fc.integer(), fc.string({ maxLength: 5 })), { maxKeys: 3 }),
);

/** A value near the schema's shape: right keys, right kinds mostly, wrong somewhere with some luck. */
export function nearValue(schema: z.ZodType, depth = 0): fc.Arbitrary<unknown> {
  if (depth > 6) return wrongValue;
  const d = defOf(schema);
  const inner = (k: string) => nearValue(d[k] as z.ZodType, depth);
  const near = (() => {
    switch (d.type) {
      case 'optional':
      case 'nullable':
      case 'default':
      case 'prefault':
      case 'catch':
      case 'readonly':
      case 'nonoptional':
        return inner('innerType');
      case 'pipe':
        return fc.oneof(inner('in'), inner('out'));
      case 'lazy':
        return nearValue((d.getter as () => z.ZodType)(), depth + 1);
      case 'object': {
        const shape = d.shape as Record<string, z.ZodType>;
        const fields = Object.fromEntries(Object.entries(shape).map(([k, v]) => [k, nearValue(v, depth + 1)]));
        return fc.tuple(fc.record(fields, { requiredKeys: [] }), fc.option(fc.tuple(fc.constantFrom('isAdmin', 'labId', '__proto__x', 'extra'), wrongValue), { freq: 4 })).map(([o, extra]) =>
          extra ? { ...o, [extra[0]]: extra[1] } : o,
        );
      }
      case 'array':
        return fc.array(nearValue(d.element as z.ZodType, depth + 1), { maxLength: 5 });
      case 'tuple':
        return fc.tuple(...(d.items as z.ZodType[]).map((i) => nearValue(i, depth + 1)));
      case 'record':
        return fc.dictionary(fc.oneof(hostileString, fc.string({ maxLength: 8 })), nearValue(d.valueType as z.ZodType, depth + 1), { maxKeys: 3 });
      case 'union':
        return fc.oneof(...(d.options as z.ZodType[]).map((o) => nearValue(o, depth + 1)));
      case 'intersection':
        return fc.oneof(nearValue(d.left as z.ZodType, depth + 1), nearValue(d.right as z.ZodType, depth + 1));
      case 'enum':
        return fc.oneof(fc.constantFrom(...Object.values(d.entries as Record<string, string | number>)), hostileString);
      case 'literal':
        return fc.oneof(fc.constantFrom(...(d.values as unknown[])), hostileString);
      case 'string':
        return fc.oneof(hostileString, fc.string({ minLength: 0, maxLength: 300 }));
      case 'number':
      case 'int':
        return fc.oneof(fc.integer({ min: -10, max: 10 }), fc.integer(), fc.double({ noNaN: true }), fc.constantFrom(1e15, 2 ** 53 + 2, -1, 0, 0.5));
      case 'bigint':
        return fc.oneof(fc.bigInt().map(String), hostileString);
      case 'boolean':
        return fc.boolean();
      default:
        return wrongValue;
    }
  })();
  return fc.oneof({ weight: 4, arbitrary: near }, { weight: 1, arbitrary: wrongValue });
}

const roundTrip = (v: unknown): unknown => {
  const text = JSON.stringify(v);
  return text === undefined ? undefined : JSON.parse(text);
};

const fails = (schema: z.ZodType, v: unknown) => !schema.safeParse(v).success;

/**
 * `count` JSON bodies the schema refuses after a JSON round trip (what the server parses), from a
 * seeded sample so a failure repeats.
 */
export function invalidBodies(schema: z.ZodType, seed: number, count: number): unknown[] {
  const arb = fc.oneof({ weight: 5, arbitrary: nearValue(schema) }, { weight: 1, arbitrary: fc.oneof(fc.array(wrongValue, { maxLength: 3 }), fc.constant({})) });
  const out: unknown[] = [];
  const seen = new Set<string>();
  for (const v of fc.sample(arb, { seed, numRuns: count * 6 })) {
    const sent = roundTrip(v);
    // express.json accepts only objects and arrays (strict mode); primitives are a separate, parser-level case
    if (sent === undefined || sent === null || typeof sent !== 'object') continue;
    const key = JSON.stringify(sent);
    if (seen.has(key) || !fails(schema, sent)) continue;
    seen.add(key);
    out.push(sent);
    if (out.length >= count) break;
  }
  return out;
}

/** Query strings the schema refuses once parsed the way Express 5 parses them (node:querystring). */
export function invalidQueries(schema: z.ZodObject, valid: Record<string, string>, seed: number, count: number): string[] {
  const keys = Object.keys(schema.shape);
  const value = fc.oneof(hostileString, fc.array(hostileString, { minLength: 2, maxLength: 3 }), fc.integer({ min: -5, max: 100_000 }).map(String));
  const arb = fc.tuple(
    fc.dictionary(fc.constantFrom(...keys, 'unknown', 'labId[]', '__proto__'), value, { maxKeys: 4 }),
    fc.boolean(),
  ).map(([o, keepValid]) => ({ ...(keepValid ? valid : {}), ...o }));
  const out: string[] = [];
  const seen = new Set<string>();
  for (const v of fc.sample(arb, { seed, numRuns: count * 6 })) {
    const qs = querystring.stringify(v as querystring.ParsedUrlQueryInput);
    if (seen.has(qs) || !fails(schema, { ...querystring.parse(qs) })) continue;
    seen.add(qs);
    out.push(qs);
    if (out.length >= count) break;
  }
  return out;
}

/** Path parameters the schema refuses: one or more taken from hostile strings, the rest valid. */
export function invalidParams(
  schema: z.ZodObject,
  valid: Record<string, string | string[]>,
  seed: number,
  count: number,
): { params: Record<string, string | string[]>; raw: Set<string> }[] {
  const keys = Object.keys(schema.shape);
  const one = fc.oneof(
    hostileString.map((v) => ({ v, raw: false })),
    fc.constantFrom(...RAW_PATH_STRINGS).map((v) => ({ v, raw: true })),
  );
  const arb = fc.tuple(fc.subarray(keys, { minLength: 1 }), fc.array(one, { minLength: keys.length, maxLength: keys.length }));
  const out: { params: Record<string, string | string[]>; raw: Set<string> }[] = [];
  const seen = new Set<string>();
  for (const [bad, values] of fc.sample(arb, { seed, numRuns: count * 8 })) {
    const params: Record<string, string | string[]> = { ...valid };
    const raw = new Set<string>();
    bad.forEach((k, i) => {
      const { v, raw: isRaw } = values[i]!;
      // a wildcard takes segments: a hostile one between valid ones
      params[k] = Array.isArray(valid[k]) ? ['0,0,256,256', v] : v;
      if (isRaw) raw.add(k);
    });
    const seenAs = Object.fromEntries(Object.entries(params).map(([k, v]) => [k, raw.has(k) ? decodeOr(v) : v]));
    // an empty segment addresses another route ("/figures/" is the list), not this one with a bad value
    if (Object.values(params).some((v) => (Array.isArray(v) ? v.includes('') : v === ''))) continue;
    const key = JSON.stringify([params, [...raw]]);
    if (seen.has(key) || !fails(schema, seenAs)) continue;
    seen.add(key);
    out.push({ params, raw });
    if (out.length >= count) break;
  }
  return out;
}

function decodeOr(v: string | string[]): string | string[] {
  const d = (s: string) => {
    try {
      return decodeURIComponent(s);
    } catch {
      return s;
    }
  };
  return Array.isArray(v) ? v.map(d) : d(v);
}

/** "/runs/:id/views/:layer/:palette/iiif/*path" with the values filled in (encoded unless raw). */
export function fillPath(template: string, params: Record<string, string | string[]>, raw: Set<string>): string {
  return template.replace(/([:*])([A-Za-z0-9_]+)/g, (_m, kind: string, name: string) => {
    const v = params[name];
    if (v === undefined) throw new Error(`no value for ${kind}${name} in ${template}`);
    const enc = (s: string) => (raw.has(name) ? s : encodeURIComponent(s));
    return Array.isArray(v) ? v.map(enc).join('/') : enc(v);
  });
}
