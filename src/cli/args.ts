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

/** node:util's parse errors in the words of this tool. */
function describeParseError(err: Error & { code?: string }): string {
  const option = /Option '(-{1,2}[^ ']+)/.exec(err.message)?.[1] ?? /option '(-{1,2}[^ ']+)'/i.exec(err.message)?.[1];
  if (err.code === 'ERR_PARSE_ARGS_UNKNOWN_OPTION' && option) return `unknown option ${option}`;
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
  try {
    const args = joinNegativeValues(spec, argv);
    const { values, positionals } = parseArgs({ args, options, allowPositionals: true, strict: true });
    return { values: values as Record<string, string | boolean | undefined>, positionals };
  } catch (err) {
    throw new UsageError(describeParseError(err as Error & { code?: string }), spec.name);
  }
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

/** A heading and the option rows of one command (for the overall help). */
export function formatOptionList(spec: CommandSpec, heading: string): string {
  return [`${heading} options:`, ...formatRows(optionRows(spec)), ''].join('\n');
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
  const value = trimmed === '' ? NaN : Number(trimmed);
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
