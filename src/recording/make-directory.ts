/** Create a directory and its missing parents. */
import { mkdirSync, statSync } from 'node:fs';
import { dirname, resolve } from 'node:path';

/**
 * Like mkdirSync(path, {recursive: true}), but one level at a time: Node 20's recursive mkdir spins forever where
 * mkdir answers ENOENT under a directory that exists (e.g. inside /proc). Throws the system error otherwise.
 */
export function makeDirectory(path: string): void {
  const full = resolve(path);
  try {
    if (statSync(full).isDirectory()) return;
  } catch {
    // does not exist yet
  }
  const parent = dirname(full);
  if (parent !== full) {
    let parentExists: boolean;
    try {
      parentExists = statSync(parent).isDirectory();
    } catch {
      parentExists = false;
    }
    if (!parentExists) makeDirectory(parent);
  }
  mkdirSync(full);
}
