/** Bad command-line input: exit code 2, one line naming the option and what it allows. */
export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

/** A recipe or input file that cannot be read or parsed: exit code 2. */
export class InputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'InputError';
  }
}
