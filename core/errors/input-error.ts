/**
 * The one error type for bad input that reaches nearveil from outside (a query, a site table,
 * a request body). `code` is a stable machine code, `field` names what was wrong, `message`
 * is for people. The API turns it into a 4xx JSON body; the CLI prints the message.
 */
export class InputError extends Error {
  readonly code: string;
  readonly field: string;
  readonly status: 400 | 404 | 409 | 413 | 415 | 422;
  readonly details: readonly InputIssue[];

  constructor(
    code: string,
    field: string,
    message: string,
    options: { status?: InputError['status']; details?: readonly InputIssue[] } = {},
  ) {
    super(message);
    this.name = 'InputError';
    this.code = code;
    this.field = field;
    this.status = options.status ?? 400;
    this.details = options.details ?? [];
  }
}

/** One problem inside a larger input, for instance one cell of a site table (1-based row). */
export interface InputIssue {
  readonly row?: number;
  readonly column?: string;
  readonly message: string;
}
