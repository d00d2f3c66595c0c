// Must NOT compile: the declarations are real types, not `any`.
import { parse } from '../../pkg-node/clout_wasm.js';

const file = parse('[3; 2, 1, 1]');
file.report({ budget: 'a lot' });
const passed: string = file.decide({ yes: 'p1' }).passed;
console.log(passed);
