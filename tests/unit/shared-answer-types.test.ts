// Finding 2: the shapes the API answers are declared once, in shared/types, for the server and the client.
import { describe, expect, it } from 'vitest';
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';

const root = join(import.meta.dirname, '../..');
const read = (path: string) => readFileSync(join(root, path), 'utf8');
const filesUnder = (dir: string, pattern: RegExp): string[] =>
  readdirSync(join(root, dir), { withFileTypes: true, recursive: true })
    .filter((e) => e.isFile() && pattern.test(e.name))
    .map((e) => join(e.parentPath, e.name).slice(root.length + 1));
const declaredTypes = (source: string) => [...source.matchAll(/^\s*(?:export\s+)?(?:interface|type)\s+(\w+)/gm)].map((m) => m[1]);

// What a query function may still declare itself: the bodies and parameters it sends, never an answer.
const requestShapes: Record<string, string> = {
  UploadInput: 'the file and fields of an upload',
  ImportRequest: 'the CSV text and the choices sent with it',
  StepBodies: 'the body of each isolation step action',
  StepVerb: 'the step actions',
  ChecklistUpdate: 'the checklist body (inferred from its schema)',
  // The calculator reads the register answer field by field on purpose, so a register that differs leaves manual entry working.
  PipelineChoice: 'the calculator’s own reading of a register row',
  PipelineChoices: 'the calculator’s own reading of the register list',
};

describe('finding 2: one declaration of each API answer, in shared/types', () => {
  it('when the client’s query functions are read, then none declares an answer type of its own', () => {
    const files = readdirSync(join(root, 'client/src/features'), { withFileTypes: true })
      .filter((d) => d.isDirectory())
      .flatMap((d) => filesUnder(`client/src/features/${d.name}/api`, /\.tsx?$/));
    expect(files.length).toBeGreaterThan(30);
    const own = files.flatMap((f) => declaredTypes(read(f)).filter((name) => !(name in requestShapes)).map((name) => `${f}: ${name}`));
    expect(own).toEqual([]);
  });

  it('when the input schemas in shared/schemas are read, then they declare no answer types (only the Page envelope beside the page query)', () => {
    const files = filesUnder('shared/schemas', /\.ts$/);
    const answers = files.flatMap((f) => [...read(f).matchAll(/^export\s+interface\s+(\w+)/gm)].map((m) => `${f}: ${m[1]}`));
    expect(answers).toEqual(['shared/schemas/common.schema.ts: Page']);
  });

  it('when the answer types are looked up, then each module is used by the server and by the client', () => {
    const modules = ['admin', 'attachments', 'auth', 'board', 'calc', 'gas-tests', 'isolations', 'permits', 'timed-checks'];
    const server = filesUnder('server/src', /\.ts$/).map(read).join('\n');
    const client = filesUnder('client/src', /\.tsx?$/).map(read).join('\n');
    const unused = modules.flatMap((m) => {
      const spec = `'@shared/types/${m}'`;
      return [...(server.includes(spec) ? [] : [`${m} (server)`]), ...(client.includes(spec) ? [] : [`${m} (client)`])];
    });
    expect(unused).toEqual([]);
  });
});
