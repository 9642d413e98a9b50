#!/usr/bin/env node
/**
 * The composition root: picks the command, parses its options, runs it, prints errors and chooses the exit code
 * (0 ok, 1 check failed, 2 unusable input or usage). Commands are loaded lazily so that headless commands start
 * fast and never load the dashboard libraries.
 */
import { formatHelp, formatOptionList, parseCommandArgs, type CommandSpec, type ParsedArgs } from './args.js';
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
    summary: 'monitor live telemetry from a serial radio or a websocket',
    load: () => import('./commands/watch.js'),
  },
  replay: { summary: 'play a recorded flight through the monitor', load: () => import('./commands/replay.js') },
  review: { summary: 'report the exceedances of a recorded flight', load: () => import('./commands/review.js') },
  fit: {
    summary: 'estimate the drag polar, the thrust and the demonstrated CL from recorded flights',
    load: () => import('./commands/fit.js'),
  },
  check: {
    summary: 'pass/fail a recorded flight against the alert levels (for CI)',
    load: () => import('./commands/check.js'),
  },
  serve: {
    summary: 'answer an autopilot on the bench with margins over a websocket',
    load: () => import('./commands/serve.js'),
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

async function mainHelp(): Promise<string> {
  const width = Math.max(...Object.keys(COMMANDS).map((c) => c.length));
  const rows = Object.entries(COMMANDS).map(([name, c]) => `  ${name.padEnd(width)}  ${c.summary}`);
  // Every command's options, each with its unit and default (loading a command module loads no dashboard code).
  const optionSections: string[] = [];
  for (const [name, entry] of Object.entries(COMMANDS)) {
    const mod = await entry.load();
    optionSections.push(formatOptionList(mod.spec, `turnmargin ${name}`));
  }
  return [
    'turnmargin — how close a turning fixed-wing UAV is to its stall, thrust and structural load-factor limits',
    '',
    'usage: turnmargin <command> [options]     turnmargin <command> --help',
    '',
    'commands:',
    ...rows,
    '',
    'global options:',
    '  -h, --help     show this help (turnmargin <command> --help: that command in full)',
    '  -V, --version  print the version',
    '',
    ...optionSections,
    CAUTION,
    '',
  ].join('\n');
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
    process.stdout.write(await mainHelp());
    return name === undefined ? EXIT_UNUSABLE : 0;
  }
  if (name === '--version' || name === '-V') {
    process.stdout.write('turnmargin 0.1.0\n');
    return 0;
  }
  const entry = COMMANDS[name];
  if (!entry) {
    printProblems([`unknown command "${name}" (commands: ${Object.keys(COMMANDS).join(', ')}; see turnmargin --help)`]);
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

// Run only when executed as the program (not when imported by tests).
const invokedAs = process.argv[1] ?? '';
if (invokedAs.endsWith('main.js') || invokedAs.endsWith('turnmargin')) {
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
