/**
 * A problem the user caused and can fix: routes turn it into a 4xx with this message, and nothing
 * has been changed when it is thrown.
 */
export class UserError extends Error {
  constructor(
    readonly status: 400 | 403 | 404 | 409 | 410 | 413 | 415 | 422 | 429,
    readonly code: string,
    message: string,
    readonly field?: string,
  ) {
    super(message);
  }
}
