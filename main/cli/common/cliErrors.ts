/**
 * Errors a user can cause, caught at the edge of the command and printed as one line
 * (what, where, what to do). Anything else is a fault of ours: exit 1, no stack trace
 * unless RATELINE_DEBUG is set.
 */
export class InputError extends Error {
  override readonly name = 'InputError';
  constructor(message: string) {
    super(message);
  }
}

export const EXIT_OK = 0;
export const EXIT_FAULT = 1;
export const EXIT_BAD_INPUT = 2;

export interface CommandModule {
  /** Runs the command; resolves to the exit code. Throws InputError for bad input. */
  run(argv: string[]): Promise<number>;
}
