import { describe, expect, it } from 'vitest';
import { safeParse, type core } from 'zod';

// Every module in shared/schemas, so a schema added later is walked too.
const modules = import.meta.glob<Record<string, unknown>>('../../shared/schemas/*.ts', { eager: true });

// Not request inputs: they read tenants.settings (jsonb), which holds the keys of several features at once.
const readsStoredSettings = new Set(['tenantSettingsSchema', 'tenantAtmosphereSettingsSchema']);

type Def = { type: string } & Record<string, unknown>;
const isSchema = (v: unknown): v is core.$ZodType => typeof v === 'object' && v !== null && '_zod' in v;
const defOf = (s: core.$ZodType) => s._zod.def as unknown as Def;

/** Every object schema reachable from a schema: fields, array items, union options, both ends of a pipe, wrapped types. */
function objectsIn(root: core.$ZodType, where: string): Array<{ where: string; schema: core.$ZodType }> {
  const found: Array<{ where: string; schema: core.$ZodType }> = [];
  const seen = new Set<unknown>();
  const visit = (s: unknown, at: string) => {
    if (!isSchema(s) || seen.has(s)) return;
    seen.add(s);
    const def = defOf(s);
    if (def.type === 'object') {
      found.push({ where: at, schema: s });
      for (const [k, v] of Object.entries(def.shape as Record<string, unknown>)) visit(v, `${at}.${k}`);
    }
    if (def.type === 'pipe') {
      visit(def.in, at);
      visit(def.out, at);
    }
    for (const inner of ['innerType', 'element', 'left', 'right', 'valueType']) visit(def[inner], at);
    if (Array.isArray(def.options)) def.options.forEach((o, i) => visit(o, `${at}[option ${i}]`));
  };
  visit(root, where);
  return found;
}

const inputSchemas = Object.entries(modules).flatMap(([file, exports]) =>
  Object.entries(exports)
    .filter(([name, value]) => isSchema(value) && !readsStoredSettings.has(name))
    .map(([name, value]) => ({ name: `${file.split('/').pop()} ${name}`, schema: value as core.$ZodType })),
);

describe('finding 13: every input schema in shared/schemas refuses unknown fields', () => {
  it('when the shared schemas are walked, then there are object schemas to check in every module', () => {
    expect(Object.keys(modules).length).toBeGreaterThanOrEqual(10);
    expect(inputSchemas.flatMap((s) => objectsIn(s.schema, s.name)).length).toBeGreaterThan(40);
  });

  it('when any object schema (top level or nested) is built, then it is strict', () => {
    const loose = inputSchemas.flatMap((s) => objectsIn(s.schema, s.name)).filter(({ schema }) => {
      const catchall = defOf(schema).catchall;
      return !(isSchema(catchall) && defOf(catchall).type === 'never');
    });
    expect(loose.map((l) => l.where)).toEqual([]);
  });

  it('when a body carries a field no schema has, then every object schema reports that very field', () => {
    const missed: string[] = [];
    for (const { where, schema } of inputSchemas.flatMap((s) => objectsIn(s.schema, s.name))) {
      let issues: core.$ZodIssue[] = [];
      try {
        const result = safeParse(schema, { unknownFieldProbe: 1 });
        issues = result.success ? [] : result.error.issues;
      } catch (err) {
        missed.push(`${where} threw ${(err as Error).message}`);
        continue;
      }
      if (!issues.some((i) => i.code === 'unrecognized_keys' && i.keys.includes('unknownFieldProbe'))) missed.push(where);
    }
    expect(missed).toEqual([]);
  });
});
