import { mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { makeDirectory } from '../../src/recording/make-directory.js';

const dir = mkdtempSync(join(tmpdir(), 'tm-mkdir-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('makeDirectory', () => {
  it('creates missing parents and accepts a directory that already exists', () => {
    const deep = join(dir, 'a', 'b', 'c');
    makeDirectory(deep);
    expect(statSync(deep).isDirectory()).toBe(true);
    expect(() => makeDirectory(deep)).not.toThrow();
  });

  it('fails at once where the system refuses, instead of spinning', () => {
    // /proc refuses new entries with ENOENT even though it exists (Linux).
    expect(() => makeDirectory('/proc/turnmargin-test/x')).toThrow(/ENOENT/);
  });
});
