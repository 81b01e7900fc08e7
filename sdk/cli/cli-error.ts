/** A mistake the person at the terminal can fix; printed as one line, exit code 2. */
export class CliError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'CliError';
  }
}
