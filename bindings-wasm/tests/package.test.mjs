// The Node package against the `clout` command: for every example rule file
// and every rule in it, `parse(text).report({ rule })` must deep-equal
// `clout report FILE --rule RULE --format json`, and ballots must decide as
// `clout decide` does. Errors in rule text must carry the line and column the
// command prints. Run after `bash bindings-wasm/build.sh` and a build of the
// command (`cargo build -p clout-cli`; CLOUT_BIN overrides the binary).
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { execFileSync, spawnSync } from 'node:child_process';
import { createRequire } from 'node:module';
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { examples, parseExample } from './examples.mjs';

const here = dirname(fileURLToPath(import.meta.url));
const root = resolve(here, '../..');
const require = createRequire(import.meta.url);
const pkg = require('../pkg-node');
const bin = process.env.CLOUT_BIN ?? join(root, 'target/debug/clout');
if (!existsSync(bin)) {
  throw new Error(`no clout binary at ${bin}: run \`cargo build -p clout-cli\` or set CLOUT_BIN`);
}

/** Runs the command and returns stdout, stderr and the exit code. */
function clout(args) {
  const r = spawnSync(bin, args, { cwd: root, encoding: 'utf8', maxBuffer: 64 << 20 });
  return { stdout: r.stdout, stderr: r.stderr, code: r.status };
}

function cloutJson(args) {
  const r = clout(args);
  assert.equal(r.code, 0, `clout ${args.join(' ')} failed: ${r.stderr}`);
  return JSON.parse(r.stdout);
}



test('the examples exist and the package ships each of them', () => {
  assert.ok(examples.length >= 8, `${examples.length} examples`);
  const shipped = pkg.examples().map((e) => e.name).sort();
  // Rule files that read tables are not shipped (the table of treasury.clout has 3,000 rows).
  const plain = examples.filter((f) => !readFileSync(join(root, 'examples', f), 'utf8').includes(' from "'));
  assert.deepEqual(shipped, plain);
  assert.ok(plain.length < examples.length, 'an example reads a table');
  for (const e of pkg.examples()) {
    assert.equal(e.text, readFileSync(join(root, 'examples', e.name), 'utf8'));
  }
});

for (const name of examples) {
  const path = join('examples', name);
  const file = parseExample(pkg, name);
  for (const rule of file.rules) {
    test(`report: ${name}, rule ${rule}, equals clout report --format json`, () => {
      const ours = file.report({ rule });
      const theirs = cloutJson(['report', path, '--rule', rule, '--format', 'json']);
      assert.deepEqual(ours, theirs);
      assert.equal(ours.members.length, file.members.length);
    });
  }
  test(`decide: ${name}, three ballots per rule equal clout decide --format json`, () => {
    const members = file.members;
    const half = members.filter((_, i) => i % 2 === 0);
    const ballots = [
      { yes: ['all'] },
      { yes: half, rest: 'no' },
      { yes: half.slice(0, 1), no: members.slice(-1), abstain: members.slice(1, 2), rest: 'absent' },
    ];
    for (const rule of file.rules) {
      for (const b of ballots) {
        const args = ['decide', path, '--rule', rule, '--format', 'json'];
        for (const list of ['yes', 'no', 'abstain']) {
          if (b[list]?.length) args.push(`--${list}`, b[list].join(','));
        }
        if (b.rest) args.push('--rest', b.rest);
        assert.deepEqual(file.decide({ rule, ...b }), cloutJson(args), args.join(' '));
      }
    }
  });
}

test('report() with no options is the demo report of clout report --format json', () => {
  const demo = pkg.examples()[0];
  assert.deepEqual(pkg.parse(demo.text).report(), cloutJson(['report', '--format', 'json']));
});

test('report options reach the library: ternary, attendance, a forced engine, approximation', () => {
  const path = 'examples/transit.clout';
  const file = pkg.parse(readFileSync(join(root, path), 'utf8'));
  assert.deepEqual(
    file.report({ rule: 'charter', ternary: true, attendance: 0.8, engine: 'enumerate' }),
    cloutJson(['report', path, '--rule', 'charter', '--ternary', '--attendance', '0.8', '--engine', 'enumerate', '--format', 'json']),
  );
  const approx = file.report({ budget: 10, seed: 3, tolerance: 0.01 });
  assert.equal(approx.approximate, true);
  assert.deepEqual(
    approx,
    cloutJson(['report', path, '--budget', '10', '--seed', '3', '--tolerance', '0.01', '--format', 'json']),
  );
  const plan = file.plan({ budget: 10 });
  assert.equal(plan.approximate, true);
  assert.match(plan.reason, /budget/);
});

test('image() writes the bytes of clout compile', () => {
  const dir = mkdtempSync(join(tmpdir(), 'clout-wasm-'));
  try {
    const out = join(dir, 'quick.img');
    const r = clout(['compile', 'examples/transit.clout', '--rule', 'quick', '-o', out]);
    assert.equal(r.code, 0, r.stderr);
    const file = pkg.parse(readFileSync(join(root, 'examples/transit.clout'), 'utf8'));
    const bytes = file.image({ rule: 'quick' });
    assert.ok(bytes instanceof Uint8Array);
    assert.deepEqual(Buffer.from(bytes), readFileSync(out));
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});

/** The first `FILE:LINE:COL: error: MESSAGE` of the command's stderr. */
function firstError(stderr) {
  const m = stderr.match(/^[^\n]*?:(\d+):(\d+): error: ([^\n]*)$/m);
  return m && { line: Number(m[1]), column: Number(m[2]), message: m[3] };
}

test('errors in rule text are thrown with the line, column and message clout check prints', () => {
  const dir = join(root, 'tests/hostile');
  const decoder = new TextDecoder('utf-8', { fatal: true });
  let compared = 0;
  let notText = 0;
  for (const name of readdirSync(dir).sort()) {
    const bytes = readFileSync(join(dir, name));
    let text;
    try {
      text = decoder.decode(bytes);
    } catch {
      // Not UTF-8: a JavaScript string cannot hold these bytes, so parse() never sees them.
      notText += 1;
      continue;
    }
    const expected = firstError(clout(['check', join('tests/hostile', name)]).stderr);
    assert.ok(expected, `clout check located no error in ${name}`);
    assert.throws(
      () => pkg.parse(text),
      (e) => {
        assert.equal(e.name, 'CloutError', name);
        assert.ok(e instanceof Error);
        assert.equal(e.kind, 'rule-text', name);
        assert.deepEqual({ line: e.line, column: e.column }, { line: expected.line, column: expected.column }, name);
        // The command shows hidden characters (controls, format characters,
        // line separators) as visible `\u{..}` escapes; the package keeps the text.
        const shown = e.message.replace(/[\p{Cc}\p{Cf}\u2028\u2029]/gu, (c) => `\\u{${c.codePointAt(0).toString(16)}}`);
        assert.equal(shown, expected.message, name);
        assert.ok(e.errors.length >= 1);
        assert.equal(e.errors[0].line, e.line);
        return true;
      },
    );
    compared += 1;
  }
  assert.ok(compared >= 60, `${compared} hostile files compared`);
  assert.ok(notText <= 5, `${notText} hostile files are not UTF-8`);
});

test('a typo is thrown with its place, every error, a hint and the rendered text', () => {
  const text = 'member harbor seats=9\nmember mill seats=7\nbloc founders = harbour, mil\nrule r = founders\n';
  assert.throws(
    () => pkg.parse(text),
    (e) => {
      assert.equal(e.line, 3);
      assert.equal(e.column, 17);
      assert.equal(e.message, 'unknown member `harbour`');
      assert.equal(e.hint, 'did you mean `harbor`?');
      assert.equal(e.errors.length, 2);
      assert.deepEqual([e.errors[1].line, e.errors[1].column], [3, 26]);
      assert.match(e.rendered, /rule text:3:17: error: unknown member `harbour`/);
      return true;
    },
  );
});

test('bad calls throw a CloutError with a hint, never a crash', () => {
  const file = pkg.parse('[3; 2, 1, 1]');
  const cases = [
    [() => pkg.parse(42), /the rule text must be a string/],
    [() => file.report({ budgte: 5 }), /unknown option `budgte`/, 'did you mean `budget`?'],
    [() => file.report({ rule: 'nope' }), /no rule named `nope`/],
    [() => file.report('fast'), /options must be an object/],
    [() => file.report({ seed: -1 }), /option `seed` must be a whole number/],
    [() => file.report({ budget: 10n }), /plain data/],
    [() => file.report({ attendance: 2 }), /attendance 2 is not a chance/],
    [() => file.report({ budget: 1, exact: true }), /over the budget/],
    [() => file.decide({ yes: ['p9'] }), /unknown member `p9`/],
    [() => file.decide({ rest: 'away' }), /decide: unknown rest `away`/, 'one of no, abstain, absent'],
  ];
  for (const [call, message, hint] of cases) {
    assert.throws(call, (e) => {
      assert.equal(e.name, 'CloutError');
      assert.match(e.message, message);
      assert.equal(e.line, null);
      if (hint) assert.equal(e.hint, hint);
      return true;
    });
  }
  // The instance still works after every refusal.
  assert.equal(file.report().members.length, 3);
});

test('interchangeable rows and weight shares describe the rule', () => {
  const file = pkg.parse(pkg.examples()[0].text);
  const rows = file.interchangeable({ rule: 'budget' });
  assert.deepEqual(rows.map((r) => r.label), ['harbor', 'mill', 'ferry', 'delegate1..delegate12']);
  const shares = file.weightShares({ rule: 'budget' });
  const seats = shares.find((s) => s.attribute === 'seats');
  assert.equal(seats.total, '29');
  assert.equal(seats.shares[0], 9 / 29);
  assert.ok(Math.abs(seats.shares.reduce((a, b) => a + b, 0) - 1) < 1e-12);
  const outline = file.outline();
  assert.deepEqual(outline.rules.map((r) => r.name), file.rules);
  assert.deepEqual(outline.blocs.find((b) => b.name === 'founders'), { name: 'founders', members: ['harbor', 'mill'] });
  assert.equal(outline.groups[0].members.length, 12);
});

test('reportChart is the SVG that clout report --svg writes', () => {
  const dir = mkdtempSync(join(tmpdir(), 'clout-wasm-chart-'));
  try {
    const path = join(dir, 'chart.svg');
    const r = clout(['report', 'examples/transit.clout', '--rule', 'closure', '--svg', path]);
    assert.equal(r.code, 0, r.stderr);
    const file = parseExample(pkg, 'transit.clout');
    assert.equal(file.reportChart({ rule: 'closure' }), readFileSync(path, 'utf8'));
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});

test("the README's JavaScript example runs", () => {
  const readme = readFileSync(join(root, 'README.md'), 'utf8');
  const section = readme.slice(readme.indexOf('<!-- wasm:begin -->'), readme.indexOf('<!-- wasm:end -->'));
  const code = section.match(/```js\n([\s\S]*?)```/)[1];
  const load = (path) => (path === './bindings-wasm/pkg-node' ? pkg : assert.fail(`unexpected require ${path}`));
  // The example's last expressions are its results; run it and check them.
  const results = new Function('require', `${code}; return { file, report };`)(load);
  assert.deepEqual(results.file.rules, ['budget']);
  assert.equal(results.report.members.length, 15);
  assert.equal(results.report.rule, 'budget');
});

test('a rule file that reads a table needs it passed by path', () => {
  const text = readFileSync(join(root, 'examples/treasury.clout'), 'utf8');
  assert.throws(() => pkg.parse(text), (e) => {
    assert.equal(e.kind, 'rule-text');
    assert.match(e.message, /holders\.csv/);
    return true;
  });
  assert.throws(() => pkg.parse(text, { 'holders.csv': 42 }), /the table `holders.csv` must be text/);
  const file = parseExample(pkg, 'treasury.clout');
  assert.equal(file.members.length, 3000);
});
