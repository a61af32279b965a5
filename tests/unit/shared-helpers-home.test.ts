import { readdirSync, readFileSync } from 'node:fs';
import { dirname, join, relative, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import ts from 'typescript';
import { describe, expect, it } from 'vitest';

// Finding 5: helpers that several features use have one home in server/src/lib. Each is declared
// there and nowhere else, and every file that uses one imports it from there (not through the
// feature that used to hold it).
const root = fileURLToPath(new URL('../..', import.meta.url));

const homes: Record<string, string> = {
  CallerContext: 'server/src/lib/caller',
  auditActor: 'server/src/lib/caller',
  inDateOn: 'server/src/lib/qualifications',
  qualificationOnSiteDay: 'server/src/lib/qualifications',
  holdsQualification: 'server/src/lib/qualifications',
  tenantAtmosphereLimits: 'server/src/lib/atmosphere-limits',
  limitsFromSettings: 'server/src/lib/atmosphere-limits',
  loadActor: 'server/src/lib/actor',
  membershipsOf: 'server/src/lib/actor',
  canonicalJson: 'server/src/lib/canonical-json',
};

function tsFiles(dir: string): string[] {
  return readdirSync(join(root, dir), { withFileTypes: true }).flatMap((e) => {
    const path = join(dir, e.name);
    if (e.isDirectory()) return tsFiles(path);
    return /\.tsx?$/.test(e.name) && !e.name.endsWith('.d.ts') ? [path] : [];
  });
}

const files = [...tsFiles('server/src'), ...tsFiles('scripts'), ...tsFiles('tests')].map((path) => ({
  path: path.replace(/\.tsx?$/, ''),
  source: ts.createSourceFile(path, readFileSync(join(root, path), 'utf8'), ts.ScriptTarget.Latest, true),
}));

const exported = (node: ts.Node) => ts.canHaveModifiers(node) && (ts.getModifiers(node) ?? []).some((m) => m.kind === ts.SyntaxKind.ExportKeyword);

/** Top-level exported declarations of one file, by name. */
function declaredNames(source: ts.SourceFile): string[] {
  return source.statements.flatMap((s) => {
    if (!exported(s)) return [];
    if (ts.isVariableStatement(s)) return s.declarationList.declarations.map((d) => d.name.getText(source));
    if ((ts.isFunctionDeclaration(s) || ts.isInterfaceDeclaration(s) || ts.isTypeAliasDeclaration(s) || ts.isClassDeclaration(s)) && s.name) return [s.name.text];
    return [];
  });
}

/** Each named import (or re-export) of one file, with the module it comes from, resolved against the project root. */
function importedNames(file: { path: string; source: ts.SourceFile }): { name: string; from: string }[] {
  const out: { name: string; from: string }[] = [];
  for (const s of file.source.statements) {
    let names: readonly (ts.ImportSpecifier | ts.ExportSpecifier)[] = [];
    if (ts.isImportDeclaration(s) && s.importClause?.namedBindings && ts.isNamedImports(s.importClause.namedBindings)) names = s.importClause.namedBindings.elements;
    else if (ts.isExportDeclaration(s) && s.exportClause && ts.isNamedExports(s.exportClause)) names = s.exportClause.elements;
    const spec = (ts.isImportDeclaration(s) || ts.isExportDeclaration(s)) && s.moduleSpecifier && ts.isStringLiteral(s.moduleSpecifier) ? s.moduleSpecifier.text : null;
    if (!spec?.startsWith('.')) continue;
    const from = relative(root, resolve(root, dirname(file.path), spec)).replace(/\/index$/, '');
    for (const el of names) out.push({ name: (el.propertyName ?? el.name).text, from });
  }
  return out;
}

describe('finding 5: cross-module helpers live in server/src/lib', () => {
  it('when the server is searched for where each shared helper is declared, then it is declared once, in its lib home', () => {
    const where = Object.fromEntries(Object.keys(homes).map((name) => [name, files.filter((f) => declaredNames(f.source).includes(name)).map((f) => f.path)]));
    expect(where).toEqual(Object.fromEntries(Object.entries(homes).map(([name, home]) => [name, [home]])));
  });

  it('when a file uses a shared helper, then it imports it from its lib home', () => {
    const elsewhere = files.flatMap((f) => importedNames(f).filter((i) => homes[i.name] && i.from !== homes[i.name]).map((i) => `${f.path}: ${i.name} from ${i.from}`));
    const users = files.filter((f) => importedNames(f).some((i) => homes[i.name] === i.from));
    expect(elsewhere).toEqual([]);
    expect(users.length, 'the features import the helpers from lib').toBeGreaterThan(15);
  });
});
