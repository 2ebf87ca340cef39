import { expect } from "vitest";
/**
 * Excel's CustomFunctions global does not exist in Node. Tests that call the worksheet
 * functions install this stand-in with the same shape (an Error class with code and message,
 * the ErrorCode strings); the product code looks the global up when it makes an error.
 */
export class WorksheetErrorDouble {
  constructor(
    readonly code: string,
    readonly message?: string,
  ) {}
}

export function installCustomFunctionsDouble(): void {
  (globalThis as Record<string, unknown>).CustomFunctions = {
    Error: WorksheetErrorDouble,
    ErrorCode: { invalidValue: "#VALUE!", notAvailable: "#N/A", invalidNumber: "#NUM!" },
  };
}

/** The worksheet error a call rejects with (fails the test when the call succeeds or throws something else). */
export async function worksheetError(promise: Promise<unknown>): Promise<WorksheetErrorDouble> {
  try {
    await promise;
  } catch (error) {
    expect(error).toBeInstanceOf(WorksheetErrorDouble);
    return error as WorksheetErrorDouble;
  }
  throw new Error("expected a worksheet error");
}
