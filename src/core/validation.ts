/** Turns zod issues into user-facing lines: `file: key.path must be … (got value)`. */
import type * as z from 'zod';

/**
 * A value (a schema) built on its first use: a command that never reads such a document does not pay for building
 * it at start-up.
 */
export function builtOnFirstUse<T>(build: () => T): () => T {
  let built: T | undefined;
  return () => (built ??= build());
}

export type Checked<T> = { ok: true; value: T; warnings: string[] } | { ok: false; problems: string[] };

function valueAt(input: unknown, path: ReadonlyArray<PropertyKey>): { found: boolean; value: unknown } {
  let cur: unknown = input;
  for (const key of path) {
    if (cur === null || typeof cur !== 'object' || !(key in (cur as object))) return { found: false, value: undefined };
    cur = (cur as Record<PropertyKey, unknown>)[key];
    if (cur === undefined) return { found: false, value: undefined };
  }
  return { found: true, value: cur };
}

export function formatPath(path: ReadonlyArray<PropertyKey>): string {
  let out = '';
  for (const key of path) {
    if (typeof key === 'number') out += `[${key}]`;
    else out += out ? `.${String(key)}` : String(key);
  }
  return out;
}

function describeValue(value: unknown): string {
  if (value === undefined) return 'nothing';
  // JSON.parse turns an overflowing literal such as 1e400 into ±Infinity, which JSON.stringify prints as null.
  if (typeof value === 'number' && !Number.isFinite(value)) return `${value} (number too large)`;
  const text = JSON.stringify(value);
  if (text === undefined) return String(value);
  return text.length > 60 ? `${text.slice(0, 57)}...` : text;
}

/**
 * One line per problem. `label` names the file (or stream) the input came from.
 * Missing keys read "is required", unknown keys read "is not a known key".
 */
export function describeIssues(label: string, input: unknown, issues: ReadonlyArray<z.core.$ZodIssue>): string[] {
  const lines: string[] = [];
  for (const issue of issues) {
    if (issue.code === 'unrecognized_keys') {
      for (const key of issue.keys) {
        lines.push(`${label}: ${formatPath([...issue.path, key])} is not a known key`);
      }
      continue;
    }
    const where = formatPath(issue.path) || '(top level)';
    const { found, value } = valueAt(input, issue.path);
    if (!found) {
      lines.push(`${label}: ${where} is required (${issue.message})`);
    } else {
      lines.push(`${label}: ${where} ${issue.message} (got ${describeValue(value)})`);
    }
  }
  return lines;
}

function withoutKeys(input: unknown, path: ReadonlyArray<PropertyKey>, keys: readonly string[]): unknown {
  if (input === null || typeof input !== 'object') return input;
  const copy: Record<PropertyKey, unknown> | unknown[] = Array.isArray(input) ? [...input] : { ...(input as object) };
  if (path.length === 0) {
    for (const k of keys) delete (copy as Record<string, unknown>)[k];
    return copy;
  }
  const [head, ...rest] = path;
  (copy as Record<PropertyKey, unknown>)[head!] = withoutKeys(
    (input as Record<PropertyKey, unknown>)[head!],
    rest,
    keys,
  );
  return copy;
}

/**
 * Validate with a strict schema, but let unknown keys through as warnings (a misspelt key is worth a word; a file
 * carrying extra notes of its own is not wrong). Any other problem fails, and the unknown keys are listed with it.
 */
export function parseLenient<T>(schema: z.ZodType<T>, input: unknown, label: string): Checked<T> {
  const first = schema.safeParse(input);
  if (first.success) return { ok: true, value: first.data, warnings: [] };
  const unknown = first.error.issues.filter((i) => i.code === 'unrecognized_keys');
  const others = first.error.issues.filter((i) => i.code !== 'unrecognized_keys');
  if (others.length > 0) return { ok: false, problems: describeIssues(label, input, first.error.issues) };
  let stripped = input;
  for (const issue of unknown) {
    if (issue.code === 'unrecognized_keys') stripped = withoutKeys(stripped, issue.path, issue.keys);
  }
  const second = schema.safeParse(stripped);
  if (!second.success) return { ok: false, problems: describeIssues(label, input, first.error.issues) };
  const warnings = describeIssues(label, input, unknown).map((line) => `${line} (ignored)`);
  return { ok: true, value: second.data, warnings };
}
