import { describe, expect, it } from 'vitest';
import { systemErrorWords } from '../src/system-errors.js';

/** An error as Node reports a failed system call: a message and a code (errno names, POSIX.1 / Linux errno(3)). */
function systemError(code: string): NodeJS.ErrnoException {
  return Object.assign(new Error(`${code}: something failed, open '/x'`), { code });
}

describe('system error words', () => {
  it.each([
    ['ENOENT', 'no such file'],
    ['EISDIR', 'is a directory'],
    ['ENOTDIR', 'not a directory'],
    ['EACCES', 'permission denied'],
    ['EPERM', 'permission denied'],
    ['ENOSPC', 'disk full'],
    ['EIO', 'input/output error'],
    ['EPIPE', 'the reader closed the pipe'],
    ['EADDRINUSE', 'the port is in use'],
    ['EADDRNOTAVAIL', 'no such address on this machine'],
  ])('says %s in words: %s', (code, words) => {
    expect(systemErrorWords(systemError(code))).toBe(words);
  });

  it('takes the words of the context first where a code means something more precise there', () => {
    expect(systemErrorWords(systemError('ENOENT'), { ENOENT: 'no such directory' })).toBe('no such directory');
    expect(systemErrorWords(systemError('EACCES'), { ENOENT: 'no such directory' })).toBe('permission denied');
  });

  it("falls back to the error's own message for a code it has no words for, or no code", () => {
    expect(systemErrorWords(systemError('EXDEV'))).toBe("EXDEV: something failed, open '/x'");
    expect(systemErrorWords(new Error('plain failure'))).toBe('plain failure');
    expect(systemErrorWords('a string')).toBe('a string');
  });
});
