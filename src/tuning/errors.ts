/**
 * Bad input to a scan or a tune: which argument is wrong and why. Thrown before any work starts, so
 * callers (CLI, app) can show one clear line instead of a failed run. The argument name is also in
 * the message, because errors crossing a worker boundary keep only their message.
 */
export class TuningInputError extends Error {
  constructor(
    readonly argument: string,
    readonly reason: string,
  ) {
    super(`${argument}: ${reason}`);
    this.name = 'TuningInputError';
  }
}

/** The work was cancelled (workers terminated); its results, if any arrive, are dropped. */
export class CancelledError extends Error {
  constructor(message = 'cancelled') {
    super(message);
    this.name = 'CancelledError';
  }
}
