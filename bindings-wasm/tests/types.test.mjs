// The generated TypeScript declarations (pkg-node/clout_wasm.d.ts) type the
// package: ordinary use compiles under `tsc --strict`, misuse does not.
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawnSync } from 'node:child_process';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const here = dirname(fileURLToPath(import.meta.url));
const tsc = join(here, '../node_modules/typescript/bin/tsc');

function compile(file) {
  const args = [tsc, '--strict', '--noEmit', '--target', 'es2022', '--lib', 'esnext,dom', '--module', 'nodenext', '--moduleResolution', 'nodenext', join(here, 'types', file)];
  return spawnSync(process.execPath, args, { encoding: 'utf8' });
}

test('ordinary use type-checks against the generated declarations', () => {
  const r = compile('usage.ts');
  assert.equal(r.status, 0, r.stdout + r.stderr);
});

test('misuse is a type error (options and results are typed, not any)', () => {
  const r = compile('misuse.ts');
  assert.notEqual(r.status, 0);
  assert.match(r.stdout, /misuse\.ts\(5,\d+\): error TS2322/);
  assert.match(r.stdout, /misuse\.ts\(6,\d+\): error TS2322/);
});
