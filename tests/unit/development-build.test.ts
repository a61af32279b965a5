// Issue 18, weight on the wire: the bundle stage refuses a client built with React's development runtime.
// The check is tried on React's own files as installed: its development builds and its production builds.
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
// @ts-expect-error plain ESM helper shared with the npm scripts
import { developmentMarkers } from '../../scripts/lib/development-build.mjs';

const require = createRequire(import.meta.url);
const reactFile = (pkg: string, file: string) => readFileSync(join(dirname(require.resolve(`${pkg}/package.json`)), 'cjs', file), 'utf8');
const markersIn = (source: string) => developmentMarkers(source) as string[];

describe('issue 18: no development build of React in the shipped client', () => {
  it("when a chunk holds React's development JSX runtime or React DOM's development build, then the check names it", () => {
    expect(markersIn(reactFile('react', 'react-jsx-dev-runtime.development.js'))).toContain('the development JSX runtime (jsxDEV)');
    expect(markersIn(reactFile('react', 'react-jsx-runtime.development.js'))).toContain('the development JSX runtime (jsxDEV)');
    expect(markersIn(reactFile('react-dom', 'react-dom-client.development.js'))).toEqual(expect.arrayContaining(["React DOM's development build", "React's development warnings"]));
    expect(markersIn('import{jsxDEV as e}from"./jsx-dev-runtime.js";e("div",{})')).toHaveLength(1);
  });

  it("when a chunk holds React's production builds only, then the check finds nothing", () => {
    for (const [pkg, file] of [
      ['react', 'react-jsx-runtime.production.js'],
      ['react', 'react.production.js'],
      ['react-dom', 'react-dom-client.production.js'],
    ])
      expect(markersIn(reactFile(pkg, file)), file).toEqual([]);
  });
});
