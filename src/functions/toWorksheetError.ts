/**
 * The one place where a failure becomes a worksheet error. Engine errors carry a code
 * (src/engine/errors.ts); this maps the code to the cell error Excel shows:
 *
 * - "bad-input" -> #VALUE! with the engine's message (what was wrong, how to fix it);
 * - "not-found" -> #N/A with the message;
 * - "numeric"   -> #NUM!. Excel shows custom messages only on #VALUE! and #N/A
 *   (CustomFunctions.ErrorCode reference, "A custom error message can't be used" for #NUM!),
 *   so the message is kept on the thrown value for logs but Excel shows the bare #NUM!;
 * - "cancelled" -> #N/A "recalculation was abandoned" (Excel discards it: it only happens after
 *   Excel cancelled the call, and it has already asked for a fresh one);
 * - anything else (a bug) -> #VALUE! saying Skein could not finish, with the cause.
 *
 * `CustomFunctions` is looked up when an error is made, not when the module loads: the add-in
 * runtime defines it as a global, and the Node tests install a small stand-in before calling.
 */
import { isSkeinError } from "../engine/errors";

/** What a worksheet error is made of, before it becomes a CustomFunctions.Error. */
export interface WorksheetErrorParts {
  code: "#VALUE!" | "#N/A" | "#NUM!";
  message: string;
}

/** Plain-language form of a failure, independent of the Excel runtime. */
export function describeFailure(error: unknown): WorksheetErrorParts {
  if (isSkeinError(error)) {
    switch (error.code) {
      case "bad-input":
        return { code: "#VALUE!", message: error.message };
      case "not-found":
        return { code: "#N/A", message: error.message };
      case "numeric":
        return { code: "#NUM!", message: error.message };
      case "cancelled":
        return { code: "#N/A", message: "Skein abandoned this calculation because its inputs changed; the new result follows." };
    }
  }
  const cause = error instanceof Error ? error.message : String(error);
  return { code: "#VALUE!", message: `Skein could not finish: ${cause}. Please report this with the data that caused it.` };
}

/** True when `value` is already a worksheet error made by this module (or by the runtime). */
export function isWorksheetError(value: unknown): value is CustomFunctions.Error {
  const runtime = (globalThis as { CustomFunctions?: typeof CustomFunctions }).CustomFunctions;
  return runtime !== undefined && value instanceof runtime.Error;
}

/** The CustomFunctions.Error to throw for `error`; an existing worksheet error passes through. */
export function toWorksheetError(error: unknown): CustomFunctions.Error {
  if (isWorksheetError(error)) return error;
  const runtime = (globalThis as { CustomFunctions?: typeof CustomFunctions }).CustomFunctions;
  if (runtime === undefined) {
    // Only reachable outside Excel without a stand-in; surface the cause rather than hide it.
    throw error instanceof Error ? error : new Error(String(error));
  }
  const { code, message } = describeFailure(error);
  switch (code) {
    case "#VALUE!":
      return new runtime.Error(runtime.ErrorCode.invalidValue, message);
    case "#N/A":
      return new runtime.Error(runtime.ErrorCode.notAvailable, message);
    case "#NUM!": {
      const numeric = new runtime.Error(runtime.ErrorCode.invalidNumber);
      // Excel ignores a message on #NUM!; keep the cause readable for logs and tests.
      Object.defineProperty(numeric, "cause", { value: message, enumerable: false });
      return numeric;
    }
  }
}

/** Runs a worksheet function's body; any failure leaves as a worksheet error, never as an unhandled exception. */
export async function worksheetCall<T>(body: () => Promise<T> | T): Promise<T> {
  try {
    return await body();
  } catch (error) {
    throw toWorksheetError(error);
  }
}
