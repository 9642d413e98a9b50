/** Turns zod issues into user-facing lines: `file: key.path must be … (got value)`. */
import type { z } from 'zod';

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
