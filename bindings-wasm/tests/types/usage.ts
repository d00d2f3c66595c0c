// Compiled by tests/types.test.mjs with `tsc --strict --noEmit`: the
// generated declarations must type ordinary use of the package.
import { parse, examples, type Report, type Decision, type CloutError, type Plan } from '../../pkg-node/clout_wasm.js';

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
console.log(first, swings, rules, critical, steps, image.length);
