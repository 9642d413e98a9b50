/** Declarative command-line options: parsing (node:util parseArgs), number checks and help text. */
import { parseArgs } from 'node:util';
import { UsageError } from '../errors.js';

export interface OptionSpec {
  name: string;
  type: 'string' | 'boolean';
  short?: string;
  /** Placeholder shown in help, e.g. FILE, M, HZ. */
  valueName?: string;
  /** Unit shown in help, e.g. "m", "°C", "m/s". */
  unit?: string;
  /** Default shown in help (text). */
  defaultText?: string;
  description: string;
}

export interface CommandSpec {
  name: string;
  summary: string;
  usage: string;
  /** Paragraphs printed after the option list. */
  notes?: string[];
  options: OptionSpec[];
}

export interface ParsedArgs {
  values: Record<string, string | boolean | undefined>;
  positionals: string[];
}

const HELP_OPTION: OptionSpec = { name: 'help', type: 'boolean', short: 'h', description: 'show this help' };

const NEGATIVE_NUMBER = /^-(\d|\.\d)/;

/**
 * parseArgs takes "-5" after an option for another option; a value that reads as a negative number (an OAT, an
 * ISA deviation, an altitude below sea level) is joined to its option as "--oat=-5" first.
 */
export function joinNegativeValues(spec: CommandSpec, argv: readonly string[]): string[] {
  const takesValue = new Set<string>();
  for (const o of spec.options) {
    if (o.type !== 'string') continue;
    takesValue.add(`--${o.name}`);
    if (o.short) takesValue.add(`-${o.short}`);
  }
  const out: string[] = [];
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i]!;
    const next = argv[i + 1];
    if (arg === '--') {
      out.push(...argv.slice(i));
      break;
    }
    if (takesValue.has(arg) && next !== undefined && NEGATIVE_NUMBER.test(next)) {
      out.push(arg.startsWith('--') ? `${arg}=${next}` : `${arg}${next}`);
      i++;
    } else {
      out.push(arg);
    }
  }
  return out;
}

/** Edit distance (insertions, deletions, substitutions, adjacent swaps) between two short words. */
export function editDistance(a: string, b: string): number {
  const rows: number[][] = Array.from({ length: a.length + 1 }, (_, i) => [i, ...new Array<number>(b.length).fill(0)]);
  for (let j = 1; j <= b.length; j++) rows[0]![j] = j;
  for (let i = 1; i <= a.length; i++) {
    for (let j = 1; j <= b.length; j++) {
      const cost = a[i - 1] === b[j - 1] ? 0 : 1;
      let d = Math.min(rows[i - 1]![j]! + 1, rows[i]![j - 1]! + 1, rows[i - 1]![j - 1]! + cost);
      if (i > 1 && j > 1 && a[i - 1] === b[j - 2] && a[i - 2] === b[j - 1]) d = Math.min(d, rows[i - 2]![j - 2]! + 1);
      rows[i]![j] = d;
    }
  }
  return rows[a.length]![b.length]!;
}

/**
 * The known words nearest to a mistyped one, when near enough to be what was meant: the nearest within a third of
 * its length in edits (at least 1, at most 3), else the words it begins (at most three). Empty otherwise.
 */
export function nearestWords(typed: string, known: readonly string[]): string[] {
  const word = typed.toLowerCase();
  if (word === '') return [];
  const near = nearestWord(word, known);
  if (near !== null) return [near];
  const prefixed = known.filter((k) => k.startsWith(word));
  return prefixed.length <= 3 ? prefixed : [];
}

/** The one known word nearest to a mistyped one, within a third of its length in edits (1 to 3); else null. */
export function nearestWord(typed: string, known: readonly string[]): string | null {
  const word = typed.toLowerCase();
  if (word === '') return null;
  let best: string | null = null;
  let bestDistance = Number.POSITIVE_INFINITY;
  for (const k of known) {
    const d = editDistance(word, k);
    if (d < bestDistance) {
      best = k;
      bestDistance = d;
    }
  }
  const allowed = Math.min(3, Math.max(1, Math.floor(word.length / 3)));
  return bestDistance <= allowed ? best : null;
}

/** "unknown option --altitud (did you mean --altitude?)" */
function unknownOption(spec: CommandSpec, option: string): string {
  const name = option.replace(/^-+/, '').split('=')[0]!;
  const longNames = [...spec.options, HELP_OPTION].map((o) => o.name);
  const near = option.startsWith('--') || name.length > 1 ? nearestWords(name, longNames) : [];
  const words = near.map((w) => `--${w}`);
  const list = words.length > 1 ? `${words.slice(0, -1).join(', ')} or ${words[words.length - 1]}` : words[0];
  return `unknown option ${option}${list ? ` (did you mean ${list}?)` : ''}`;
}

/** node:util's parse errors in the words of this tool. */
function describeParseError(spec: CommandSpec, err: Error & { code?: string }): string {
  const option = /Option '(-{1,2}[^ ']+)/.exec(err.message)?.[1] ?? /option '(-{1,2}[^ ']+)'/i.exec(err.message)?.[1];
  if (err.code === 'ERR_PARSE_ARGS_UNKNOWN_OPTION' && option) return unknownOption(spec, option);
  if (err.code === 'ERR_PARSE_ARGS_INVALID_OPTION_VALUE' && option) {
    return /argument missing|ambiguous/.test(err.message) ? `${option} needs a value` : `${option}: ${err.message}`;
  }
  return err.message.replace(/\. To specify a positional argument.*$/s, '');
}

/** An option given twice is most likely a mistake (which one was meant?): say so rather than keep the last. */
function refuseRepeats(spec: CommandSpec, argv: readonly string[]): void {
  const seen = new Set<string>();
  const byShort = new Map(spec.options.filter((o) => o.short).map((o) => [`-${o.short}`, o.name]));
  for (const arg of argv) {
    if (arg === '--') break;
    const name = arg.startsWith('--') ? arg.slice(2).split('=')[0]! : byShort.get(arg);
    if (name === undefined || !spec.options.some((o) => o.name === name)) continue;
    if (seen.has(name)) throw new UsageError(`--${name} is given more than once`, spec.name);
    seen.add(name);
  }
}

export function parseCommandArgs(spec: CommandSpec, argv: string[]): ParsedArgs {
  refuseRepeats(spec, argv);
  const options: Record<string, { type: 'string' | 'boolean'; short?: string }> = {};
  for (const o of [...spec.options, HELP_OPTION]) {
    options[o.name] = o.short ? { type: o.type, short: o.short } : { type: o.type };
  }
  let values: Record<string, string | boolean | undefined>;
  let positionals: string[];
  try {
    const args = joinNegativeValues(spec, argv);
    const parsed = parseArgs({ args, options, allowPositionals: true, strict: true });
    values = parsed.values as Record<string, string | boolean | undefined>;
    positionals = parsed.positionals;
  } catch (err) {
    throw new UsageError(describeParseError(spec, err as Error & { code?: string }), spec.name);
  }
  // An empty value (`--record ""`, an unset shell variable) is never meant: a path of "" would mean "here".
  for (const o of spec.options) {
    const value = values[o.name];
    if (typeof value === 'string' && value.trim() === '') {
      throw new UsageError(`--${o.name} ${o.valueName ?? 'VALUE'} must not be empty`, spec.name);
    }
  }
  return { values, positionals };
}

function optionRows(spec: CommandSpec): Array<readonly [string, string]> {
  return [...spec.options, HELP_OPTION].map((o) => {
    const flag = `${o.short ? `-${o.short}, ` : ''}--${o.name}${o.type === 'string' ? ` ${o.valueName ?? 'VALUE'}` : ''}`;
    const extras: string[] = [];
    if (o.unit) extras.push(`unit: ${o.unit}`);
    if (o.defaultText) extras.push(`default: ${o.defaultText}`);
    return [flag, `${o.description}${extras.length ? ` (${extras.join('; ')})` : ''}`] as const;
  });
}

function formatRows(rows: Array<readonly [string, string]>): string[] {
  const width = Math.min(30, Math.max(...rows.map(([f]) => f.length)));
  return rows.map(([flag, text]) =>
    flag.length > width ? `  ${flag}\n  ${' '.repeat(width)}  ${text}` : `  ${flag.padEnd(width)}  ${text}`,
  );
}

export function formatHelp(spec: CommandSpec): string {
  const lines = [`turnmargin ${spec.name} — ${spec.summary}`, '', `usage: ${spec.usage}`, '', 'options:'];
  lines.push(...formatRows(optionRows(spec)));
  if (spec.notes?.length) lines.push('', ...spec.notes.flatMap((n) => [n, '']));
  return lines.join('\n').trimEnd() + '\n';
}

export interface NumberRule {
  min?: number;
  max?: number;
  /** Strict lower bound. */
  above?: number;
  integer?: boolean;
}

function describeRule(rule: NumberRule): string {
  const parts: string[] = [rule.integer ? 'a whole number' : 'a number'];
  if (rule.above !== undefined) parts.push(`above ${rule.above}`);
  if (rule.min !== undefined && rule.max !== undefined) parts.push(`from ${rule.min} to ${rule.max}`);
  else if (rule.min !== undefined) parts.push(`of at least ${rule.min}`);
  else if (rule.max !== undefined) parts.push(`${rule.above !== undefined ? 'and ' : ''}at most ${rule.max}`);
  return parts.join(' ');
}

/** Parse one number, naming the option in the error: `--altitude must be a number from -500 to 20000 (got "x")`. */
export function parseNumber(optionName: string, text: string, rule: NumberRule = {}): number {
  const trimmed = text.trim();
  const value = trimmed === '' ? Number.NaN : Number(trimmed);
  const bad =
    !Number.isFinite(value) ||
    (rule.integer && !Number.isInteger(value)) ||
    (rule.min !== undefined && value < rule.min) ||
    (rule.max !== undefined && value > rule.max) ||
    (rule.above !== undefined && value <= rule.above);
  if (bad) throw new UsageError(`--${optionName} must be ${describeRule(rule)} (got "${text}")`);
  return value;
}

export function numberOption(args: ParsedArgs, name: string, fallback: number, rule?: NumberRule): number;
export function numberOption(
  args: ParsedArgs,
  name: string,
  fallback: undefined,
  rule?: NumberRule,
): number | undefined;
export function numberOption(
  args: ParsedArgs,
  name: string,
  fallback: number | undefined,
  rule: NumberRule = {},
): number | undefined {
  const raw = args.values[name];
  if (raw === undefined || typeof raw === 'boolean') return fallback;
  return parseNumber(name, raw, rule);
}

/** A comma-separated list of numbers: `--speeds 10,12,14`. */
export function numberListOption(args: ParsedArgs, name: string, rule: NumberRule = {}): number[] | undefined {
  const raw = args.values[name];
  if (raw === undefined || typeof raw === 'boolean') return undefined;
  const items = raw.split(',').map((s) => s.trim());
  if (items.length === 0 || items.some((s) => s === '')) {
    throw new UsageError(`--${name} must be a comma-separated list of numbers (got "${raw}")`);
  }
  return items.map((s) => parseNumber(name, s, rule));
}

export function stringOption(args: ParsedArgs, name: string): string | undefined {
  const raw = args.values[name];
  return typeof raw === 'string' ? raw : undefined;
}

export function choiceOption<T extends string>(args: ParsedArgs, name: string, choices: readonly T[], fallback: T): T {
  const raw = stringOption(args, name);
  if (raw === undefined) return fallback;
  if (!(choices as readonly string[]).includes(raw)) {
    throw new UsageError(`--${name} must be one of ${choices.join(', ')} (got "${raw}")`);
  }
  return raw as T;
}

export function requireOption(args: ParsedArgs, name: string, valueName = 'FILE'): string {
  const raw = stringOption(args, name);
  if (raw === undefined || raw === '') throw new UsageError(`--${name} ${valueName} is required`);
  return raw;
}
