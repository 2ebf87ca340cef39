/*
 * Skein's worksheet functions. Each is a thin adapter: it turns range arguments into
 * the engine's inputs, calls the engine, and turns the result into a spilled 2-D array
 * or a worksheet error. The JSDoc on each function is the only source of the generated
 * functions.json (custom-functions-metadata-plugin); never edit that file by hand.
 */
import { buildDesign } from "../engine/design";
import { designMatrix } from "../engine/designMatrix";
import { leastSquares } from "../engine/leastSquares";
import { isSkeinError } from "../engine/errors";

function toWorksheetError(error: unknown): CustomFunctions.Error {
  if (isSkeinError(error)) {
    const code = error.code === "numeric" ? CustomFunctions.ErrorCode.invalidNumber : error.code === "not-found" ? CustomFunctions.ErrorCode.notAvailable : CustomFunctions.ErrorCode.invalidValue;
    return new CustomFunctions.Error(code, error.message);
  }
  return new CustomFunctions.Error(CustomFunctions.ErrorCode.invalidValue, `Skein could not finish: ${error instanceof Error ? error.message : String(error)}`);
}

/**
 * Fits a mixture of linear regressions and returns one row per component: component number, weight, noise SD, intercept, then one coefficient per predictor.
 * @customfunction FIT
 * @helpurl https://localhost:3000/taskpane.html
 * @param y The outcome: one column of numbers.
 * @param x The predictors: one or more columns of numbers, as many rows as y.
 * @param [k] Number of components (default 1).
 * @returns One row per component.
 */
export function fit(y: any[][], x: any[][], k?: number): any[][] {
  try {
    const components = k ?? 1;
    if (components !== 1) {
      throw new CustomFunctions.Error(CustomFunctions.ErrorCode.notAvailable, "Only k = 1 is available in this build.");
    }
    const design = buildDesign(y, x);
    const { matrix, q } = designMatrix(design, true);
    const result = leastSquares(matrix, design.n, q, design.y, { intercept: true });
    return [[1, 1, result.mlSigma, ...Array.from(result.coefficients)]];
  } catch (error) {
    if (error instanceof CustomFunctions.Error) throw error;
    throw toWorksheetError(error);
  }
}
