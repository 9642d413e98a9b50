#!/usr/bin/env -S node --no-concurrent-recompilation
/**
 * The first line runs the program with V8's optimizing compiler in the main thread (the benchmarks read it, see
 * nodeOptionsOf in bench/measure.ts). By default V8 optimizes in a background thread, and on one core that thread runs
 * whenever the system lets it, so what is optimized, with what inlined, differs from run to run: `review` of a long
 * flight took 1.0 or 1.5 s of CPU at random. Optimizing in place gives the fast case every run and costs nothing on
 * one core; on two the wall time is the same.
 *
 * The composition root: picks the command, parses its options, runs it, prints errors and chooses the exit code
 * (0 ok, 1 check failed, 2 unusable input or usage). Commands are loaded lazily so that headless commands start
 * fast and never load the dashboard libraries.
 */
import { readFileSync } from 'node:fs';
import { setFlagsFromString } from 'node:v8';
import { formatHelp, nearestWord, parseCommandArgs, type CommandSpec, type ParsedArgs } from './args.js';
import { EXIT_UNUSABLE, InputError, UsageError } from '../errors.js';
import { describeOutputError, isClosedPipe } from './output-errors.js';

/** What every command module exports. */
export interface CommandModule {
  spec: CommandSpec;
  run(args: ParsedArgs): Promise<number>;
}

interface CommandEntry {
  summary: string;
  load: () => Promise<CommandModule>;
}

const COMMANDS: Record<string, CommandEntry> = {
  envelope: {
    summary: 'print the turn envelope (limits against airspeed) of an airframe',
    load: () => import('./commands/envelope.js'),
  },
  watch: {
    summary: 'monitor live telemetry from a serial radio, a websocket or UDP datagrams',
    load: () => import('./commands/watch.js'),
  },
  replay: { summary: 'play a recorded flight through the monitor', load: () => import('./commands/replay.js') },
  review: {
    summary: 'report the exceedances of recorded flights (one or several)',
    load: () => import('./commands/review.js'),
  },
  fit: {
    summary: 'estimate the drag polar, the thrust and the demonstrated CL from recorded flights',
    load: () => import('./commands/fit.js'),
  },
  check: {
    summary: 'pass/fail recorded flights against the alert levels (for CI)',
    load: () => import('./commands/check.js'),
  },
  serve: {
    summary: 'answer an autopilot on the bench with margins over a websocket',
    load: () => import('./commands/serve.js'),
  },
  card: {
    summary: 'plan a build-up of turn test points (a test card) from the airframe model',
    load: () => import('./commands/card.js'),
  },
  simulate: {
    summary: 'fly a turn plan with a point-mass model and emit telemetry',
    load: () => import('./commands/simulate.js'),
  },
  demo: {
    summary: 'replay the bundled demo flight with the demo airframe (npm start)',
    load: () => import('./commands/demo.js'),
  },
};

const CAUTION =
  "Advisory tool for test planning and monitoring; not flight-critical. The aircraft's approved limits,\n" +
  "the operator's procedures and local aviation rules take precedence.";

function mainHelp(): string {
  const width = Math.max(...Object.keys(COMMANDS).map((c) => c.length));
  const rows = Object.entries(COMMANDS).map(([name, c]) => `  ${name.padEnd(width)}  ${c.summary}`);
  return [
    'turnmargin — how close a turning fixed-wing UAV is to its stall, thrust and structural load-factor limits',
    '',
    'usage: turnmargin <command> [options]',
    '',
    'commands:',
    ...rows,
    '',
    'Each command lists its options, with units and defaults, in: turnmargin <command> --help',
    '',
    'global options:',
    '  -h, --help     show this help',
    '  -V, --version  print the version',
    '',
    CAUTION,
    '',
  ].join('\n');
}

/** The version in the package's own package.json (searched upward: works from src/ and from dist/src/). */
export function packageVersion(startUrl: URL = new URL('.', import.meta.url)): string {
  for (let url = startUrl, depth = 0; depth < 6; url = new URL('..', url), depth++) {
    try {
      const pkg = JSON.parse(readFileSync(new URL('package.json', url), 'utf8')) as {
        name?: unknown;
        version?: unknown;
      };
      if (pkg.name === 'turnmargin' && typeof pkg.version === 'string') return pkg.version;
    } catch {
      // not here: one level up
    }
  }
  return 'unknown';
}

function printProblems(lines: string[]): void {
  for (const line of lines) process.stderr.write(`turnmargin: ${line}\n`);
}

export async function main(argv: string[]): Promise<number> {
  const [name, ...rest] = argv;
  if (name === undefined || name === '--help' || name === '-h' || name === 'help') {
    if (name === 'help' && rest[0] && COMMANDS[rest[0]]) {
      const mod = await COMMANDS[rest[0]]!.load();
      process.stdout.write(formatHelp(mod.spec));
      return 0;
    }
    process.stdout.write(mainHelp());
    return name === undefined ? EXIT_UNUSABLE : 0;
  }
  if (name === '--version' || name === '-V') {
    process.stdout.write(`turnmargin ${packageVersion()}\n`);
    return 0;
  }
  const entry = COMMANDS[name];
  if (!entry) {
    const near = nearestWord(name, Object.keys(COMMANDS));
    printProblems([
      `unknown command "${name}"${near ? ` (did you mean ${near}?)` : ''} (commands: ${Object.keys(COMMANDS).join(', ')}; see turnmargin --help)`,
    ]);
    return EXIT_UNUSABLE;
  }
  const mod = await entry.load();
  try {
    const args = parseCommandArgs(mod.spec, rest);
    if (args.values['help']) {
      process.stdout.write(formatHelp(mod.spec));
      return 0;
    }
    return await mod.run(args);
  } catch (err) {
    if (err instanceof UsageError) {
      printProblems([`${name}: ${err.message}`, `see: turnmargin ${name} --help`]);
      return EXIT_UNUSABLE;
    }
    if (err instanceof InputError) {
      printProblems(err.problems);
      return EXIT_UNUSABLE;
    }
    throw err;
  }
}

/**
 * Standard output that fails: a closed reader (`| head`) ends the program quietly with 0; anything else (a full
 * disk) is one line on stderr and exit 2 — never a stack trace, never the 1 that means "check failed". A command
 * that handles its own output errors (the live monitor flushes its recording first) adds a listener of its own,
 * and this one then stands back.
 */
function guardStandardOutput(): void {
  const onError = (err: NodeJS.ErrnoException): void => {
    if (process.stdout.listenerCount('error') > 1) return;
    if (isClosedPipe(err)) process.exit(0);
    process.stderr.write(`turnmargin: cannot write to standard output (${describeOutputError(err)})\n`);
    process.exit(EXIT_UNUSABLE);
  };
  process.stdout.on('error', onError);
  // A closed stderr (`2>&1 | head`) leaves nowhere to report anything: carry on without it rather than crash.
  process.stderr.on('error', () => undefined);
}

/**
 * A larger inlining budget for V8's optimizing compiler. The per-frame path (frame engine, margins, energy, review
 * sums) is a chain of small functions of numbers; past the default budget (920 bytes of bytecode per optimized
 * function) V8 calls them instead of inlining them, and every number passed or returned across such a call is a heap
 * allocation. With this budget `review` of a long flight takes about a tenth less CPU. The flags only steer what the
 * compiler inlines, read each time it optimizes a function; set here, before any of that code is hot.
 */
function widenInliningBudget(): void {
  setFlagsFromString('--max-inlined-bytecode-size=1000');
  setFlagsFromString('--max-inlined-bytecode-size-cumulative=4000');
}

// Run only when executed as the program (not when imported by tests).
const invokedAs = process.argv[1] ?? '';
if (invokedAs.endsWith('main.js') || invokedAs.endsWith('turnmargin')) {
  widenInliningBudget();
  guardStandardOutput();
  main(process.argv.slice(2)).then(
    (code) => {
      process.exitCode = code;
    },
    (err: unknown) => {
      process.stderr.write(
        `turnmargin: unexpected error: ${err instanceof Error ? (err.stack ?? err.message) : String(err)}\n`,
      );
      process.exitCode = EXIT_UNUSABLE;
    },
  );
}
