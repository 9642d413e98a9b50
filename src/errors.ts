/** Errors the CLI turns into messages and exit codes (0 ok, 1 check failed, 2 unusable input or usage). */

export const EXIT_OK = 0;
export const EXIT_CHECK_FAILED = 1;
export const EXIT_UNUSABLE = 2;

/** Bad command line: the message names the option and what was wrong. Exit 2, with a pointer to --help. */
export class UsageError extends Error {
  readonly code = 'usage';
  constructor(
    message: string,
    readonly command?: string,
  ) {
    super(message);
    this.name = 'UsageError';
  }
}

/** Unusable input (a file that cannot be read or is invalid). `problems` holds one line per problem. Exit 2. */
export class InputError extends Error {
  readonly code = 'input';
  constructor(readonly problems: string[]) {
    super(problems.join('\n'));
    this.name = 'InputError';
  }
}
