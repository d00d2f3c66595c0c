// The workbench page. Every figure comes from the clout package: the rule
// text is parsed here (errors at once, as you type), the power report is
// computed in a Web Worker (worker.js) that a Cancel button can end, and
// each ballot is decided here (one vote is quick). This file only shows.
import init, { parse, examples } from './pkg/clout_wasm.js';
import { drawPowerChart } from './chart.js';

const $ = (id) => document.getElementById(id);
const VOTES = ['yes', 'no', 'abstain', 'absent'];

const state = {
  file: null, // the last RuleFile that compiled
  rule: null, // the chosen rule's name
  votes: new Map(), // member name -> vote
  result: null, // { report, rows, shares } of the last finished computation
};

// ---------- small DOM helpers ----------

function node(tag, attributes = {}, ...children) {
  const e = document.createElement(tag);
  for (const [k, v] of Object.entries(attributes)) {
    if (k === 'class') e.className = v;
    else if (k === 'text') e.textContent = v;
    else e.setAttribute(k, v);
  }
  e.append(...children);
  return e;
}

function tag(kind, text = kind) {
  return node('span', { class: `tag ${kind}`, text });
}

/** An exact decimal string with thousands separators (no arithmetic). */
function thousands(s) {
  return s == null ? '—' : s.replace(/\B(?=(\d{3})+(?!\d))/g, ',');
}

function index(v, halfWidth) {
  const shown = v.toFixed(4);
  return halfWidth == null ? shown : `≈${shown} ±${halfWidth.toExponential(1)}`;
}

// ---------- the editor and its errors ----------

const source = $('source');

/** Character offset of a 1-based line and column in the text. */
function offset(text, line, column) {
  const lines = text.split('\n');
  let at = 0;
  for (let l = 0; l < line - 1 && l < lines.length; l += 1) at += [...lines[l]].length + 1;
  return at + column - 1;
}

/** UTF-16 index of a character offset (textarea selections count UTF-16 units). */
function utf16(text, chars) {
  return [...text].slice(0, chars).join('').length;
}

function drawGutter(text, badLines) {
  const gutter = $('gutter');
  const count = text.split('\n').length;
  const parts = [];
  for (let l = 1; l <= count; l += 1) {
    parts.push(badLines.has(l) ? node('span', { class: 'bad', text: `! ${l}` }) : `${l}`);
    parts.push('\n');
  }
  gutter.replaceChildren(...parts, '\n');
}

function drawBackdrop(text, errors) {
  const chars = [...text];
  const spans = errors
    .map((e) => {
      const start = offset(text, e.line, e.column);
      const end = Math.max(start + 1, offset(text, e.end_line, e.end_column));
      return [start, Math.min(end, chars.length + 1)];
    })
    .sort((a, b) => a[0] - b[0]);
  const parts = [];
  let at = 0;
  for (const [start, end] of spans) {
    if (start < at) continue;
    parts.push(chars.slice(at, start).join(''));
    // An error at the very end (a missing token) marks one blank.
    const marked = chars.slice(start, end).join('') || ' ';
    parts.push(node('mark', { text: marked.replace(/\n/g, ' \n') }));
    at = end;
  }
  parts.push(chars.slice(at).join(''), '\n');
  $('backdrop').replaceChildren(...parts);
  syncScroll();
}

function syncScroll() {
  $('backdrop').scrollTop = source.scrollTop;
  $('backdrop').scrollLeft = source.scrollLeft;
  $('gutter').scrollTop = source.scrollTop;
}

function showErrors(text, error) {
  const errors = error ? error.errors.filter((e) => e.severity !== 'note') : [];
  const notes = error ? error.errors.filter((e) => e.severity === 'note') : [];
  drawGutter(text, new Set(errors.map((e) => e.line)));
  drawBackdrop(text, errors);
  source.setAttribute('aria-invalid', error ? 'true' : 'false');
  const status = $('text-status');
  status.className = error ? 'text-status bad' : 'text-status';
  if (!error) {
    status.textContent = 'The rule text compiles.';
    $('errors').replaceChildren();
    return;
  }
  if (!errors.length) {
    status.textContent = `Error: ${error.message}${error.hint ? ` (hint: ${error.hint})` : ''}`;
    $('errors').replaceChildren();
    return;
  }
  status.textContent = `${errors.length} error${errors.length === 1 ? '' : 's'} in the rule text; the figures below are for the last text that compiled.`;
  $('errors').replaceChildren(
    ...errors.map((e) => {
      const go = node('button', { type: 'button', text: `Line ${e.line}, column ${e.column}: ${e.message}` });
      go.addEventListener('click', () => {
        const start = utf16(text, offset(text, e.line, e.column));
        const end = utf16(text, Math.max(offset(text, e.end_line, e.end_column), offset(text, e.line, e.column) + 1));
        source.focus();
        source.setSelectionRange(start, end);
      });
      const item = node('li', {}, go);
      if (e.hint) item.append(node('span', { class: 'hint', text: `Hint: ${e.hint}` }));
      return item;
    }),
    ...notes.map((n) => node('li', { text: n.message })),
  );
}

// ---------- the worker that computes reports ----------

const computer = {
  worker: null,
  job: 0,
  busy: false,
  started: 0,
  timer: 0,
  label: '',
  spawn() {
    this.worker = new Worker(new URL('./worker.js', import.meta.url), { type: 'module' });
    this.worker.onmessage = ({ data }) => this.receive(data);
    this.worker.onerror = (e) => {
      this.finish(`The computation stopped: ${e.message ?? 'the worker failed'}.`);
    };
  },
  run(text, options) {
    if (this.busy) this.restart();
    this.job += 1;
    this.busy = true;
    this.started = performance.now();
    this.label = 'Planning…';
    $('cancel').disabled = false;
    $('again').hidden = true;
    this.worker.postMessage({ id: this.job, text, options });
    clearInterval(this.timer);
    this.timer = setInterval(() => this.tick(), 200);
    this.tick();
  },
  restart() {
    this.worker.terminate();
    this.spawn();
  },
  cancel() {
    if (!this.busy) return;
    this.restart();
    this.finish(`Cancelled after ${this.elapsed()}. The figures below are for the last finished computation.`);
    $('again').hidden = false;
    document.querySelector('#power').classList.add('stale');
  },
  elapsed() {
    return `${((performance.now() - this.started) / 1000).toFixed(1)} s`;
  },
  tick() {
    $('progress').textContent = `${this.label} ${this.elapsed()}`;
  },
  finish(message) {
    this.busy = false;
    clearInterval(this.timer);
    $('cancel').disabled = true;
    $('progress').textContent = message;
  },
  receive(data) {
    if (data.id !== this.job) return;
    if (data.type === 'plan') {
      const p = data.plan;
      this.label = p.approximate
        ? `Estimating rule “${p.rule}” (${p.members} members; ${p.reason})…`
        : `Counting exactly: rule “${p.rule}”, ${p.engine} engine, about ${p.steps.toPrecision(2)} steps…`;
      this.tick();
      return;
    }
    if (data.type === 'error') {
      const e = data.error;
      this.finish(`Not computed: ${e.message}${e.hint ? ` (hint: ${e.hint})` : ''}`);
      document.querySelector('#power').classList.add('stale');
      return;
    }
    const how = data.report.approximate ? 'estimated' : `exact, ${data.report.engine} engine`;
    this.finish(`Computed in ${this.elapsed()} (${how}).`);
    state.result = data;
    showReport();
  },
};

function reportOptions() {
  return { rule: state.rule, budget: Number($('budget').value), exact: $('exact').checked };
}

function compute() {
  if (!state.file) return;
  document.querySelector('#power').classList.remove('stale');
  computer.run(state.file.source, reportOptions());
}

// ---------- the report ----------

function showReport() {
  const { report, rows, shares } = state.result;
  $('rule-text').textContent = `rule ${report.rule} = ${report.text}`;
  const notice = $('notice');
  notice.hidden = !report.approximate;
  notice.textContent = report.approximate
    ? `Approximate: ${report.reason}. Every figure is an estimate ± its half-width at ${report.confidence * 100}% confidence. ${report.penrose_method}.`
    : '';
  drawTable(report, rows);
  drawSummary(report);
  drawChartChoices(report, shares);
  drawChart();
  $('model').textContent = `${report.model} ${report.caution}`;
}

function drawTable(report, rows) {
  const attributes = Object.keys(report.members[0]?.weights ?? {});
  const grouped = rows.some((r) => r.members.length > 1);
  const head = ['member', ...(grouped ? ['×'] : []), ...attributes, 'swings', 'Banzhaf', 'Penrose', 'Shapley-Shubik', 'flags'];
  const numeric = (h) => !['member', 'flags'].includes(h);
  $('members').tHead.replaceChildren(
    node('tr', {}, ...head.map((h) => node('th', { scope: 'col', class: numeric(h) ? 'num' : '', text: h }))),
  );
  const body = rows.map((row) => {
    const m = report.members[row.indices[0]];
    const flags = node('td', { class: 'flags' });
    if (m.dictator) flags.append(tag('dictator', '♛ dictator'));
    else if (m.veto) flags.append(tag('veto', '◆ veto'));
    if (m.dummy) flags.append(tag('dummy', '○ dummy'));
    const cells = [
      node('th', { scope: 'row', text: row.label }),
      ...(grouped ? [node('td', { class: 'num', text: String(row.members.length) })] : []),
      ...attributes.map((a) => node('td', { class: 'num', text: thousands(m.weights[a]) })),
      node('td', { class: 'num', text: thousands(m.swings) }),
      node('td', { class: 'num', text: index(m.banzhaf, m.banzhaf_half_width) }),
      node('td', { class: 'num', text: index(m.penrose, m.penrose_half_width) }),
      node('td', { class: 'num', text: index(m.shapley_shubik, m.shapley_shubik_half_width) }),
      flags,
    ];
    return node('tr', { 'data-member': row.label }, ...cells);
  });
  $('members').tBodies[0].replaceChildren(...body);
}

function drawSummary(report) {
  const yesNo = (b) => (b == null ? '—' : b ? 'yes' : 'no');
  const names = (pick) => report.members.filter(pick).map((m) => m.name);
  const list = (xs) => (xs.length === 0 ? 'none' : xs.length > 12 ? `${xs.slice(0, 12).join(', ')} … (${xs.length})` : xs.join(', '));
  const items = [
    ['conditions', report.conditions.map((c) => `${c.text}  means  ${c.attribute} ≥ ${thousands(c.quota)} of ${thousands(c.total)}`).join('\n')],
    ['winning coalitions', thousands(report.winning_coalitions)],
    ['probability of passage', report.passage_probability == null ? '—' : report.passage_probability.toFixed(6)],
    ['proper', `${yesNo(report.proper)} (no two disjoint coalitions both pass)`],
    ['strong', `${yesNo(report.strong)} (of every coalition and its complement, one passes)`],
    ['veto members', list(names((m) => m.veto))],
    ['dummies', list(names((m) => m.dummy === true))],
    ['smallest winning coalition', report.smallest_winning_coalition == null ? '—' : `${report.smallest_winning_coalition} members`],
    ['engine', report.engine],
  ];
  $('summary').replaceChildren(...items.flatMap(([k, v]) => [node('dt', { text: k }), node('dd', { text: v })]));
}

function drawChartChoices(report, shares) {
  const select = $('chart-weight');
  const keep = select.value;
  const used = report.conditions.map((c) => c.attribute);
  const choice = shares.some((s) => s.attribute === keep) ? keep : (shares.find((s) => used.includes(s.attribute)) ?? shares[0])?.attribute;
  select.replaceChildren(...shares.map((s) => node('option', { value: s.attribute, text: `${s.attribute} (total ${thousands(s.total)})` })));
  if (choice) select.value = choice;
}

function drawChart() {
  if (!state.result) return;
  const { report, rows, shares } = state.result;
  const chosen = shares.find((s) => s.attribute === $('chart-weight').value) ?? shares[0];
  if (!chosen) return;
  $('chart-caption').textContent = drawPowerChart($('chart'), { rows, shares: chosen, report });
}

// ---------- the ballot ----------

function drawBallot() {
  const names = state.file ? state.file.members : [];
  for (const n of [...state.votes.keys()]) if (!names.includes(n)) state.votes.delete(n);
  $('ballot').replaceChildren(
    ...names.map((name, i) => {
      if (!state.votes.has(name)) state.votes.set(name, 'no');
      const set = node('fieldset', { class: 'vote', 'data-member': name }, node('legend', { text: name }));
      for (const v of VOTES) {
        const input = node('input', { type: 'radio', name: `vote-${i}`, value: v });
        input.checked = state.votes.get(name) === v;
        input.addEventListener('change', () => {
          state.votes.set(name, v);
          decide();
        });
        set.append(node('label', {}, input, v));
      }
      return set;
    }),
  );
  decide();
}

function decide() {
  if (!state.file) return;
  const lists = { yes: [], no: [], abstain: [] };
  for (const [name, v] of state.votes) if (v in lists) lists[v].push(name);
  let d;
  try {
    d = state.file.decide({ rule: state.rule, ...lists, rest: 'absent' });
  } catch (e) {
    $('outcome').textContent = `Not decided: ${e.message}`;
    return;
  }
  const critical = new Set(d.critical);
  for (const set of $('ballot').querySelectorAll('fieldset')) {
    set.classList.toggle('critical', critical.has(set.dataset.member));
  }
  $('outcome').replaceChildren(
    node('span', { class: d.passed ? 'passed' : 'failed', text: d.passed ? '✔ Passes' : '✘ Fails' }),
    ` under rule “${d.rule}”: ${d.yes.length} yes, ${d.no.length} no, ${d.abstain.length} abstain, ${d.absent.length} absent. `,
    d.critical.length ? `Critical (★): ${d.critical.join(', ')}.` : 'No member alone can flip this outcome.',
  );
  const table = $('tallies');
  table.hidden = false;
  table.tBodies[0].replaceChildren(
    ...d.conditions.map((c) =>
      node(
        'tr',
        {},
        node('th', { scope: 'row', text: c.text }),
        node('td', { text: c.attribute }),
        ...[c.sum, c.no, c.abstain, c.needed, c.total].map((v) => node('td', { class: 'num', text: thousands(v) })),
        node('td', { text: c.met ? '✔ yes' : '✘ no' }),
      ),
    ),
  );
}

// ---------- wiring ----------

function analyse() {
  const text = source.value;
  let file;
  try {
    file = parse(text);
  } catch (e) {
    showErrors(text, e);
    document.querySelector('#power').classList.add('stale');
    return;
  }
  showErrors(text, null);
  state.file?.free();
  state.file = file;
  const rules = file.rules;
  if (!rules.includes(state.rule)) state.rule = rules[0];
  $('rule').replaceChildren(...rules.map((r) => node('option', { value: r, text: r })));
  $('rule').value = state.rule;
  drawBallot();
  compute();
}

let pending = 0;
function analyseSoon() {
  clearTimeout(pending);
  // Errors and the editor's marks follow at once; the work waits for a pause in typing.
  pending = setTimeout(analyse, 250);
  syncScroll();
}

async function main() {
  await init();
  const list = examples();
  $('example').replaceChildren(...list.map((e, i) => node('option', { value: String(i), text: e.name })));
  $('example').addEventListener('change', () => {
    source.value = list[Number($('example').value)].text;
    analyse();
  });
  source.value = list[0].text;
  source.addEventListener('input', analyseSoon);
  source.addEventListener('scroll', syncScroll);
  $('rule').addEventListener('change', () => {
    state.rule = $('rule').value;
    decide();
    compute();
  });
  $('budget').addEventListener('change', compute);
  $('exact').addEventListener('change', compute);
  $('cancel').addEventListener('click', () => computer.cancel());
  $('again').addEventListener('click', compute);
  $('chart-weight').addEventListener('change', drawChart);
  for (const b of document.querySelectorAll('[data-all]')) {
    b.addEventListener('click', () => {
      for (const n of state.votes.keys()) state.votes.set(n, b.dataset.all);
      drawBallot();
    });
  }
  computer.spawn();
  analyse();
  document.body.dataset.ready = 'true';
}

main().catch((e) => {
  $('progress').textContent = `The package did not load: ${e.message}. Serve this folder over HTTP (python3 -m http.server) after bash bindings-wasm/build.sh.`;
});
