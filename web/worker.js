// The power report runs here, off the page's thread, so typing stays smooth
// and a long count can be cancelled (the page ends this worker and starts a
// new one). Messages in: { id, text, options }. Messages out: { id, type:
// 'plan', plan } first, then { id, type: 'report', report, rows, shares } or
// { id, type: 'error', error }.
import init, { parse } from './pkg/clout_wasm.js';

const ready = init();

/** A thrown CloutError as plain data (structured clone drops its fields). */
function plain(e) {
  return {
    name: e?.name ?? 'Error',
    kind: e?.kind ?? 'internal',
    message: e?.message ?? String(e),
    hint: e?.hint ?? null,
    line: e?.line ?? null,
    column: e?.column ?? null,
    errors: e?.errors ?? [],
  };
}

self.onmessage = async ({ data }) => {
  const { id, text, options } = data;
  let file;
  try {
    await ready;
    file = parse(text);
    self.postMessage({ id, type: 'plan', plan: file.plan(options) });
    const rule = { rule: options.rule };
    const report = file.report(options);
    self.postMessage({
      id,
      type: 'report',
      report,
      rows: file.interchangeable(rule),
      shares: file.weightShares(rule),
    });
  } catch (e) {
    self.postMessage({ id, type: 'error', error: plain(e) });
  } finally {
    file?.free();
  }
};
