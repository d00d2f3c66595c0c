// The drafting answers against the command line: simplify, order,
// coalitions and sweep for every example and rule, compare on pairs of
// rules, fit on the test data, each deep-equal to the command's
// `--format json` (or refused with the same message where the command
// refuses). Needs the same set-up as package.test.mjs.
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawnSync } from 'node:child_process';
import { createRequire } from 'node:module';
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { examples, parseExample } from './examples.mjs';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '../..');
const pkg = createRequire(import.meta.url)('../pkg-node');
const bin = process.env.CLOUT_BIN ?? join(root, 'target/debug/clout');
if (!existsSync(bin)) throw new Error(`no clout binary at ${bin}: run \`cargo build -p clout-cli\` or set CLOUT_BIN`);

/** The command's JSON, or its refusal as { refused: message }. */
function cli(args) {
  const r = spawnSync(bin, [...args, '--format', 'json'], { cwd: root, encoding: 'utf8', maxBuffer: 64 << 20 });
  if (r.status === 0) return JSON.parse(r.stdout);
  assert.equal(r.status, 2, r.stderr);
  return { refused: r.stderr.replace(/^error: /, '').split('\n')[0] };
}

/** The package's answer, or its refusal in the same form. */
function ours(call) {
  try {
    return call();
  } catch (e) {
    assert.equal(e.name, 'CloutError', String(e));
    return { refused: e.message };
  }
}

// Simplifying `qualified` of compact.clout searches 16,384 patterns with the
// dimension search; the command's debug build takes most of a minute on it.
const SLOW = new Set(['compact.clout qualified simplify']);


// treasury.clout (3,000 holders from a table) is left to package.test.mjs:
// its drafting answers take the command's debug build minutes each.
for (const name of examples.filter((n) => n !== 'treasury.clout')) {
  const path = join('examples', name);
  const file = parseExample(pkg, name);
  for (const rule of file.rules) {
    test(`drafting: ${name}, rule ${rule}: simplify, order, coalitions, sweep as the command`, () => {
      const base = [path, '--rule', rule];
      if (!SLOW.has(`${name} ${rule} simplify`)) {
        assert.deepEqual(ours(() => file.simplify({ rule })), cli(['simplify', ...base]), 'simplify');
      }
      assert.deepEqual(ours(() => file.order({ rule })), cli(['order', ...base]), 'order');
      assert.deepEqual(
        ours(() => file.coalitions({ rule, kind: 'minimal_blocking', limit: 7 })),
        cli(['coalitions', ...base, '--minimal-blocking', '--limit', '7']),
        'coalitions',
      );
      assert.deepEqual(ours(() => file.coalitions({ rule })), cli(['coalitions', ...base, '--minimal-winning']));
      // The 30-member treaties take a debug build seconds per quota; the 27-member union stands for them.
      if (!name.startsWith('treaty-30')) {
        assert.deepEqual(ours(() => file.sweep({ rule, step: '10%' })), cli(['sweep', ...base, '--step', '10%']), 'sweep');
      }
    });
  }
}

test('sweep options: condition, attribute and bounds as shares or quotas', () => {
  const transit = pkg.parse(readFileSync(join(root, 'examples/transit.clout'), 'utf8'));
  const args = ['sweep', 'examples/transit.clout', '--rule', 'charter'];
  assert.deepEqual(transit.sweep({ rule: 'charter', condition: 2 }), cli([...args, '--condition', '2']));
  assert.deepEqual(
    transit.sweep({ rule: 'charter', attribute: 'riders', start: '40%', stop: '90%', step: '7.5%' }),
    cli([...args, '--attr', 'riders', '--from', '40%', '--to', '90%', '--step', '7.5%']),
  );
  const game = pkg.parse('[5; 3, 2, 2, 1]');
  assert.deepEqual(game.sweep({ start: 1, stop: 8, step: 1 }), cli(['sweep', '--game', '[5; 3, 2, 2, 1]', '--from', '1', '--to', '8', '--step', '1']));
  assert.throws(() => game.sweep({ step: '10 percent' }), /sweep: step: `10 percent` is not a quota/);
});

test('compare: same and different rules, matched by name or position', () => {
  const transit = pkg.parse(readFileSync(join(root, 'examples/transit.clout'), 'utf8'));
  const council = pkg.parse(readFileSync(join(root, 'examples/council.clout'), 'utf8'));
  const game = (text) => pkg.parse(text);
  const pairs = [
    [game('[3; 2, 1, 1]'), {}, game('[4; 2, 1, 1]'), ['[3; 2, 1, 1]', '[4; 2, 1, 1]']],
    [game('[3; 2, 1, 1]'), {}, game('[5; 3, 2, 2]'), ['[3; 2, 1, 1]', '[5; 3, 2, 2]']],
    [transit, { rule: 'budget', other_rule: 'charter' }, transit,
      ['examples/transit.clout', 'examples/transit.clout', '--rule-a', 'budget', '--rule-b', 'charter']],
    [council, {}, game('[12; 5 x3, 1 x6]'), ['examples/council.clout', '[12; 5 x3, 1 x6]']],
    [transit, { rule: 'budget', other_rule: 'closure', by: 'position' }, transit,
      ['examples/transit.clout', 'examples/transit.clout', '--rule-a', 'budget', '--rule-b', 'closure', '--by', 'position']],
  ];
  const verdicts = new Set();
  for (const [a, options, b, args] of pairs) {
    const answer = a.compare(b, options);
    assert.deepEqual(answer, cli(['compare', ...args]), args.join(' '));
    verdicts.add(answer.verdict);
  }
  assert.deepEqual([...verdicts].sort(), ['different', 'same']);
  assert.throws(() => transit.compare(council), /cannot be matched/);
});

test('fit: the same weights and quota as clout fit on the test data', () => {
  for (const name of ['fit-shares.csv', 'fit-populations.csv']) {
    const path = join('tests/data', name);
    const rows = readFileSync(join(root, path), 'utf8')
      .split('\n')
      .filter((l) => l.trim() && !l.startsWith('#'))
      .map((l) => l.split(',').map((x) => x.trim()));
    const [header, ...body] = rows;
    const targets = body.map(([m, v]) => [m, Number(v.replace(/%$/, ''))]);
    const answer = pkg.fit({ targets, populations: header[1] === 'population', seconds: 0.2 });
    assert.deepEqual(answer, cli(['fit', path, '--seconds', '0.2']), name);
  }
  assert.throws(() => pkg.fit({ targets: { a: 1 } }), /array of \[name, value\] pairs/);
});
