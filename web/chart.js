// The chart of the page: for each member (or row of interchangeable
// members), its share of one weight beside its normalized Banzhaf and
// Shapley-Shubik shares of power. Every figure comes from the package; this
// file only draws. Readable in grey scale and for colour-blind readers: the
// three bars differ in pattern (hatched, solid, dotted) as well as colour
// (Okabe-Ito blue and orange), every bar carries its value as text, and
// veto and dummy members are marked by words and symbols, not colour.
// Self-contained: no dependency on the rest of the page.

const SVG = 'http://www.w3.org/2000/svg';

const SERIES = [
  { key: 'weight', label: 'share of weight', fill: 'url(#pattern-weight)' },
  { key: 'banzhaf', label: 'Banzhaf index (normalized)', fill: '#0072b2' },
  { key: 'shapley', label: 'Shapley-Shubik index', fill: 'url(#pattern-shapley)' },
];

function el(name, attributes = {}, text) {
  const node = document.createElementNS(SVG, name);
  for (const [k, v] of Object.entries(attributes)) node.setAttribute(k, String(v));
  if (text !== undefined) node.textContent = text;
  return node;
}

function percent(x) {
  return `${(x * 100).toFixed(1)}%`;
}

function patterns() {
  const defs = el('defs');
  const hatch = el('pattern', { id: 'pattern-weight', width: 6, height: 6, patternUnits: 'userSpaceOnUse', patternTransform: 'rotate(45)' });
  hatch.append(el('rect', { width: 6, height: 6, fill: '#d9d9d9' }), el('line', { x1: 0, y1: 0, x2: 0, y2: 6, stroke: '#3a3a3a', 'stroke-width': 2 }));
  const dots = el('pattern', { id: 'pattern-shapley', width: 5, height: 5, patternUnits: 'userSpaceOnUse' });
  dots.append(el('rect', { width: 5, height: 5, fill: '#e69f00' }), el('circle', { cx: 2.5, cy: 2.5, r: 1.2, fill: '#1a1a1a' }));
  defs.append(hatch, dots);
  return defs;
}

/**
 * Draws the chart into `container` and returns a one-line summary for its
 * caption. `rows` are the package's interchangeable rows, `shares` one
 * entry of its weight shares, `report` the package's report.
 */
export function drawPowerChart(container, { rows, shares, report, maxRows = 24 }) {
  const data = rows.map((row) => {
    const i = row.indices[0];
    const m = report.members[i];
    return {
      label: row.label,
      count: row.members.length,
      weight: shares.shares[i],
      banzhaf: m.banzhaf,
      shapley: m.shapley_shubik,
      veto: m.veto,
      dummy: m.dummy === true,
      dictator: m.dictator,
    };
  });
  // Heaviest first; equal weights by power.
  data.sort((a, b) => b.weight - a.weight || b.banzhaf - a.banzhaf);
  const shown = data.slice(0, maxRows);

  const labelWidth = 230;
  const plotWidth = 420;
  const bar = 11;
  const rowHeight = bar * 3 + 14;
  const top = 58;
  const height = top + shown.length * rowHeight + 36;
  const width = labelWidth + plotWidth + 110;
  const largest = Math.max(0.1, ...shown.flatMap((d) => [d.weight, d.banzhaf, d.shapley]));
  const scaleMax = Math.min(1, Math.ceil(largest * 10) / 10);
  const x = (v) => labelWidth + (v / scaleMax) * plotWidth;

  const svg = el('svg', {
    viewBox: `0 0 ${width} ${height}`,
    width,
    height,
    role: 'img',
    'aria-labelledby': 'chart-title chart-desc',
    'font-family': 'DejaVu Sans, Liberation Sans, Arial, sans-serif',
    'font-size': 12,
  });
  svg.append(el('title', { id: 'chart-title' }, `Share of ${shares.attribute} against share of power, rule ${report.rule}`));
  const desc = shown
    .map((d) => `${d.label}: ${shares.attribute} ${percent(d.weight)}, Banzhaf ${percent(d.banzhaf)}, Shapley-Shubik ${percent(d.shapley)}${d.veto ? ', veto' : ''}${d.dummy ? ', dummy' : ''}`)
    .join('; ');
  svg.append(el('desc', { id: 'chart-desc' }, desc), patterns());

  // Legend.
  const legendX = [0, 140, 330];
  SERIES.forEach((s, k) => {
    const lx = labelWidth + legendX[k];
    svg.append(
      el('rect', { x: lx, y: 6, width: 14, height: 12, fill: s.fill, stroke: '#1a1a1a', 'stroke-width': 0.8 }),
      el('text', { x: lx + 19, y: 16 }, s.key === 'weight' ? `share of ${shares.attribute}` : s.label),
    );
  });
  svg.append(el('text', { x: 4, y: 16, 'font-weight': 'bold' }, 'each member'));
  svg.append(el('text', { x: 4, y: 32, fill: '#4a4a4a' }, '◆ veto   ○ dummy (never decides)'));

  // Grid and axis.
  for (let t = 0; t <= scaleMax + 1e-9; t += 0.1) {
    const gx = x(t);
    svg.append(
      el('line', { x1: gx, y1: top - 6, x2: gx, y2: height - 30, stroke: t === 0 ? '#1a1a1a' : '#c8c8c8', 'stroke-width': t === 0 ? 1 : 0.6 }),
      el('text', { x: gx, y: height - 14, 'text-anchor': 'middle', fill: '#4a4a4a' }, `${Math.round(t * 100)}%`),
    );
  }

  shown.forEach((d, r) => {
    const y0 = top + r * rowHeight;
    const marks = `${d.veto ? '◆ ' : ''}${d.dummy ? '○ ' : ''}`;
    const tags = [d.dictator ? 'dictator' : d.veto ? 'veto' : '', d.dummy ? 'dummy' : ''].filter(Boolean).join(', ');
    const name = d.label.length > 26 ? `${d.label.slice(0, 25)}…` : d.label;
    const g = el('g', { class: 'chart-row', 'data-label': d.label });
    g.append(el('text', { x: labelWidth - 8, y: y0 + bar + 4, 'text-anchor': 'end', 'font-weight': 'bold' }, `${marks}${name}`));
    const sub = [d.count > 1 ? `×${d.count}, each` : '', tags].filter(Boolean).join('; ');
    if (sub) g.append(el('text', { x: labelWidth - 8, y: y0 + 2 * bar + 8, 'text-anchor': 'end', fill: '#4a4a4a' }, sub));
    SERIES.forEach((s, k) => {
      const v = d[s.key];
      const by = y0 + k * bar;
      g.append(el('rect', { x: x(0), y: by, width: Math.max(0, x(v) - x(0)), height: bar - 1, fill: s.fill, stroke: '#1a1a1a', 'stroke-width': 0.6, 'data-series': s.key }));
      g.append(el('text', { x: x(v) + 4, y: by + bar - 2, 'font-size': 10, fill: '#1a1a1a' }, percent(v)));
    });
    svg.append(g);
  });
  svg.append(el('text', { x: labelWidth + plotWidth / 2, y: height - 1, 'text-anchor': 'middle', fill: '#4a4a4a' }, 'share of the total'));

  container.replaceChildren(svg);
  const more = data.length > shown.length ? ` Showing the ${shown.length} heaviest of ${data.length} rows.` : '';
  return `Each row: the member's share of ${shares.attribute} (hatched), of Banzhaf power (solid) and of Shapley-Shubik power (dotted). Where the bars differ, weight is not power.${more}`;
}
