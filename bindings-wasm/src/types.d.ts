/**
 * Compiles a rule file (or `[q; w1, ..., wn]`); throws a `CloutError` with every
 * error's line and column when it does not compile. `tables` maps the paths that
 * `members NAME from "FILE"` declarations name to their text.
 */
export function parse(text: string, tables?: Record<string, string>): RuleFile;

/**
 * The methods of a compiled rule file that take an optional options object
 * (declared here so that the argument can be left out).
 */
export interface RuleFile {
  /** How `report(options)` will compute: exact with an engine and its estimated steps, or approximate and why. */
  plan(options?: ReportOptions): Plan;
  /** The power report, as `clout report --format json` gives it. */
  report(options?: ReportOptions): Report;
  /** The chart of power beside weight as SVG text, as `clout report --svg` draws it. */
  reportChart(options?: ReportOptions): string;
  /** The outcome of one vote, as `clout decide --format json` gives it. */
  decide(ballot?: Ballot): Decision;
  /** The rule's binary image for devices and the C ABI (`clout compile`). */
  image(options?: RuleChoice): Uint8Array;
  /** Dummies, and whether the rule is one weighted vote or a proof that it is not (`clout simplify --format json`). */
  simplify(options?: RuleChoice & { budget?: number }): Simplification;
  /** Whether this rule and `other`'s pass the same coalitions (`clout compare --format json`). */
  compare(other: RuleFile, options?: CompareOptions): Comparison;
  /** Both indices and the probability of passage as a quota moves (`clout sweep --format json`). */
  sweep(options?: SweepOptions): Sweep;
  /** Minimal winning or minimal blocking coalitions (`clout coalitions --format json`). */
  coalitions(options?: CoalitionOptions): Coalitions;
  /** Members ordered by influence, classes of symmetric members (`clout order --format json`). */
  order(options?: RuleChoice): Order;
  /** Rows of interchangeable members, whose figures are equal. */
  interchangeable(options?: RuleChoice): InterchangeableRow[];
  /** Each member's share of every weight the rule counts. */
  weightShares(options?: RuleChoice): WeightShares[];
}

/** Which rule of the file (default: the first). */
export interface RuleChoice {
  rule?: string;
}

/** Options of `report` and `plan` (the command line's `clout report` options). */
export interface ReportOptions extends RuleChoice {
  /** Counting engine: "auto" (default), "enumerate", "profile", "dense" or "diagram". */
  engine?: string;
  /** Most estimated elementary steps of exact counting (default 5e10). */
  budget?: number;
  /** Most bytes an exact engine may use (default 2 GiB). */
  memory?: number;
  /** Refuse to approximate. */
  exact?: boolean;
  /** Target half-width of approximate figures, 95% confidence (default 0.001). */
  tolerance?: number;
  /** Seed of the Monte Carlo sampler (default 1). */
  seed?: number;
  /** Also Felsenthal & Machover's ternary Banzhaf measure. */
  ternary?: boolean;
  /** Also the probability of passage when each member attends with this chance. */
  attendance?: number;
}

/** One vote by names: members, groups, blocs, ranges such as `rep1..rep218`, or `all`. */
export interface Ballot extends RuleChoice {
  yes?: string | string[];
  no?: string | string[];
  abstain?: string | string[];
  /** How members in no list vote (default: absent, or no when only `yes` is given). */
  rest?: "no" | "abstain" | "absent";
}

/** How `report` will compute. */
export interface Plan {
  rule: string;
  members: number;
  approximate: boolean;
  engine: string | null;
  steps: number | null;
  reason: string | null;
}

export interface Fraction {
  numerator: string;
  denominator: string;
}

/** One member's figures; exact counts are decimal strings, null where not computed. */
export interface MemberReport {
  name: string;
  weights: Record<string, string>;
  swings: string | null;
  banzhaf: number;
  penrose: number;
  shapley_shubik: number;
  shapley_shubik_exact: Fraction | null;
  coleman_prevent: number | null;
  coleman_initiate: number | null;
  johnston: number | null;
  deegan_packel: number | null;
  public_good: number | null;
  dummy: boolean | null;
  veto: boolean;
  dictator: boolean;
  penrose_half_width: number | null;
  banzhaf_half_width: number | null;
  shapley_shubik_half_width: number | null;
  ternary_banzhaf?: number;
}

export interface ConditionReport {
  text: string;
  attribute: string;
  quota: string;
  total: string;
}

/** The power report: the JSON of `clout report --format json`. */
export interface Report {
  rule: string;
  title: string | null;
  text: string;
  approximate: boolean;
  reason: string | null;
  members: MemberReport[];
  winning_coalitions: string | null;
  passage_probability: number | null;
  proper: boolean | null;
  strong: boolean | null;
  decisive: boolean | null;
  minimal_winning_coalitions: string | null;
  minimal_blocking_coalitions: string | null;
  smallest_winning_coalition: number | null;
  conditions: ConditionReport[];
  engine: string;
  penrose_method: string | null;
  shapley_shubik_method: string | null;
  confidence: number | null;
  attendance?: { chance: number; passage_probability: number };
  model: string;
  caution: string;
}

export interface Tally {
  text: string;
  attribute: string;
  sum: string;
  no: string;
  abstain: string;
  quota: string;
  needed: string | null;
  total: string;
  four_state: boolean;
  met: boolean;
}

/** One vote: the JSON of `clout decide --format json`. */
export interface Decision {
  rule: string;
  passed: boolean;
  yes: string[];
  no: string[];
  abstain: string[];
  absent: string[];
  critical: string[];
  conditions: Tally[];
}

export interface Outline {
  title: string | null;
  attributes: string[];
  members: { name: string; group: string | null; line: number }[];
  groups: { name: string; members: string[] }[];
  blocs: { name: string; members: string[] }[];
  rules: { name: string; text: string; line: number }[];
}

/** Members with identical weights in every attribute of the rule: equal figures. */
export interface InterchangeableRow {
  members: string[];
  indices: number[];
  label: string;
}

/** Each member's share of one weight's total. */
export interface WeightShares {
  attribute: string;
  total: string;
  shares: number[];
}

/** One error in the rule text. */
export interface LocatedError {
  line: number;
  column: number;
  end_line: number;
  end_column: number;
  severity: "error" | "warning" | "note";
  message: string;
  hint: string | null;
}

/** What every call throws: an Error named "CloutError" with these fields. */
export interface CloutError extends Error {
  kind: "rule-text" | "input" | "limit" | "unsuitable";
  message: string;
  hint: string | null;
  line: number | null;
  column: number | null;
  errors: LocatedError[];
  rendered: string;
}

// ---- the drafting answers (the JSON of the drafting commands) ----

export interface CompareOptions extends RuleChoice {
  /** The rule of the other file (default: its first). */
  other_rule?: string;
  /** How members are matched (default: by name when both files name the same members). */
  by?: "name" | "position";
  budget?: number;
}

export interface SweepOptions extends RuleChoice {
  /** Move every condition on this attribute (default: the rule's only one). */
  attribute?: string;
  /** Move only this condition, 1 for the first. */
  condition?: number;
  /** A whole-number quota or a share such as "50%" (default "50%"). */
  start?: number | string;
  /** Default "100%". */
  stop?: number | string;
  /** Default "1%". */
  step?: number | string;
  budget?: number;
}

export interface CoalitionOptions extends RuleChoice {
  kind?: "minimal_winning" | "minimal_blocking";
  /** Most patterns and coalitions listed (default 50). */
  limit?: number;
}

export interface FitOptions {
  /** [member name, target] pairs in member order: shares of power, or populations. */
  targets: [string, number][];
  /** The targets are populations: aim at power proportional to their square roots. */
  populations?: boolean;
  /** Time budget in seconds on the project's machine, as a fixed number of steps (default 10). */
  seconds?: number;
  /** Largest total weight tried (default 10000). */
  max_total?: number;
}

export interface Members {
  names: string[];
  indices: number[];
}

export interface RuleRef {
  rule: string;
  title: string | null;
  text: string;
  four_state: boolean;
}

export interface WeightedVote {
  notation: string;
  quota: string;
  total: string;
  weights: Record<string, string>;
}

export interface Simplification {
  rule: RuleRef;
  dummies: Members;
  weighted: boolean;
  weighted_vote: WeightedVote | null;
  least_total: "proved" | "among_equal_weights" | "not_proved" | "not_searched" | null;
  trading_transfer: { winning: Members[]; losing: Members[] } | null;
  intersection: WeightedVote[] | null;
  [key: string]: unknown;
}

export interface Comparison {
  a: RuleRef;
  b: RuleRef;
  matched_by: "name" | "position";
  verdict: "same" | "different" | "undecided";
  witness: { coalition: Members; passes: string; smallest: boolean } | null;
  /** Coalitions one rule passes and the other does not, exact decimal; null past the diagram's node limit. */
  differing_coalitions: string | null;
  members: { name: string; banzhaf_a: number; banzhaf_b: number; shapley_shubik_a: number; shapley_shubik_b: number }[] | null;
  passage_probability_a: number | null;
  passage_probability_b: number | null;
  [key: string]: unknown;
}

export interface Sweep {
  rule: RuleRef;
  attribute: string;
  total: number;
  conditions: { number: number; text: string }[];
  points: {
    quota: number;
    share: number;
    passage_probability: number;
    members: { name: string; banzhaf: number; shapley_shubik: number }[];
  }[];
  model: string;
  caution: string;
}

export interface Coalitions {
  rule: RuleRef;
  kind: "minimal_winning" | "minimal_blocking";
  count: string;
  pattern_count: number;
  patterns: { size: number; count: string; parts: { take: number; of: Members }[] }[];
  coalitions: Members[];
  caution: string;
}

export interface Order {
  rule: RuleRef;
  complete: boolean;
  classes: { members: Members; above: number[] }[];
  incomparable: { classes: [number, number]; witnesses: [unknown, unknown] }[];
  caution: string;
}

export interface Fit {
  weighted_vote: WeightedVote;
  members: { name: string; weight: number; target: number; banzhaf: number; deviation: number }[];
  max_deviation: number;
  rms_deviation: number;
  [key: string]: unknown;
}
