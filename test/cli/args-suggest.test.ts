import { describe, expect, it } from 'vitest';
import { editDistance, nearestWord, nearestWords, parseCommandArgs, type CommandSpec } from '../../src/cli/args.js';

const spec: CommandSpec = {
  name: 'envelope',
  summary: 's',
  usage: 'u',
  options: [
    { name: 'altitude', type: 'string', description: '' },
    { name: 'altitudes', type: 'string', description: '' },
    { name: 'aircraft', type: 'string', description: '' },
    { name: 'mass', type: 'string', description: '' },
    { name: 'record', type: 'string', valueName: 'FILE', description: '' },
  ],
};

function usageMessage(argv: string[]): string {
  try {
    parseCommandArgs(spec, argv);
  } catch (err) {
    return (err as Error).message;
  }
  return '';
}

describe('option suggestions', () => {
  it('counts edits as the Damerau–Levenshtein distance (a swap of neighbours is one edit)', () => {
    // Damerau (1964) / Levenshtein (1966): kitten→sitting is 3, a transposition counts 1.
    expect(editDistance('kitten', 'sitting')).toBe(3);
    expect(editDistance('alitude', 'altitude')).toBe(1);
    expect(editDistance('atlitude', 'altitude')).toBe(1);
    expect(editDistance('', 'mass')).toBe(4);
  });

  it('suggests the nearest option for a typo, every option a prefix names, and nothing for a stranger', () => {
    expect(usageMessage(['--altitud', '5'])).toBe('unknown option --altitud (did you mean --altitude?)');
    expect(usageMessage(['--aircarft', 'x'])).toBe('unknown option --aircarft (did you mean --aircraft?)');
    expect(usageMessage(['--alt', '5'])).toBe('unknown option --alt (did you mean --altitude or --altitudes?)');
    expect(usageMessage(['--zzzzzz'])).toBe('unknown option --zzzzzz');
    expect(nearestWord('wach', ['watch', 'replay'])).toBe('watch');
    expect(nearestWords('re', ['replay', 'review', 'record', 'report'])).toEqual([]);
  });

  it('refuses an empty value for any option, naming it', () => {
    expect(usageMessage(['--record', ''])).toBe('--record FILE must not be empty');
    expect(usageMessage(['--mass='])).toBe('--mass VALUE must not be empty');
  });
});
