// Compiled by tests/types.test.mjs with `tsc --strict --noEmit`: the
// generated declarations must type ordinary use of the package.
import { parse, examples, fit, type Report, type Decision, type CloutError, type Plan, type Comparison, type Sweep } from '../../pkg-node/clout_wasm.js';

const file = parse(examples()[0].text);
const report: Report = file.report();
const budget: Report = file.report({ rule: 'charter', budget: 1e9, exact: true });
const plan: Plan = file.plan({ rule: 'budget' });
const decision: Decision = file.decide({ yes: ['harbor', 'mill'], rest: 'no' });
const image: Uint8Array = file.image();
const first: number = report.members[0].banzhaf;
const swings: string | null = budget.members[0].swings;
const rules: string[] = file.rules;
const critical: string[] = decision.critical;
const steps: number | null = plan.steps;
try {
  parse('rule r = nobody');
} catch (e) {
  const error = e as CloutError;
  const where: [number | null, number | null] = [error.line, error.column];
  console.log(where, error.hint);
}
const weighted: boolean = file.simplify({ rule: 'budget' }).weighted;
const comparison: Comparison = file.compare(parse('[3; 2, 1, 1]'), { by: 'position' });
const sweep: Sweep = file.sweep({ start: '50%', stop: 20, step: '5%' });
const quota: string = fit({ targets: [['a', 0.5], ['b', 0.5]] }).weighted_vote.quota;
const listed: string = file.coalitions({ kind: 'minimal_blocking', limit: 3 }).count;
console.log(first, swings, rules, critical, steps, image.length, weighted, comparison.verdict, sweep.points.length, quota, listed, file.order().complete);
