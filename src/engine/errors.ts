import type { CancelSignal } from "./mixtureTypes";

/**
 * Errors are values at the boundary: the engine throws a SkeinError carrying a
 * code and a plain message that says what was wrong and how to fix it. Only the
 * adapters (worksheet functions, task pane, command line) map the code to a
 * worksheet error or an exit status.
 *
 * - "bad-input": the data or the settings are wrong (a worksheet #VALUE!, exit 2).
 * - "numeric": the numbers defeated the method (a worksheet #NUM!).
 * - "not-found": a requested item does not exist (a worksheet #N/A).
 * - "cancelled": the caller abandoned the work.
 */
export type SkeinErrorCode = "bad-input" | "numeric" | "not-found" | "cancelled";

export class SkeinError extends Error {
  readonly code: SkeinErrorCode;

  constructor(code: SkeinErrorCode, message: string) {
    super(message);
    this.name = "SkeinError";
    this.code = code;
  }
}

/** Throws the "cancelled" error once the caller's signal is raised: the engine asks between EM iterations, starts and warm-start steps. */
export function checkSignal(signal: CancelSignal | undefined): void {
  if (signal?.aborted) throw new SkeinError("cancelled", "The fit was cancelled before it finished.");
}

export function isSkeinError(value: unknown): value is SkeinError {
  return value instanceof SkeinError;
}
