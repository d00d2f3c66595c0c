// The example rule files, parsed with the tables their `from "FILE"` lines
// name (beside them in examples/). Shared by the Node test files.
import { readdirSync, readFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

export const root = resolve(dirname(fileURLToPath(import.meta.url)), '../..');
export const examples = readdirSync(join(root, 'examples')).filter((f) => f.endsWith('.clout')).sort();

export function parseExample(pkg, name) {
  const text = readFileSync(join(root, 'examples', name), 'utf8');
  const tables = {};
  for (const [, path] of text.matchAll(/ from "([^"]+)"/g)) tables[path] = readFileSync(join(root, 'examples', path), 'utf8');
  return pkg.parse(text, tables);
}
