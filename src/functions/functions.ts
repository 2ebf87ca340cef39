/*
 * Skein's worksheet functions. Each is a thin adapter: it hands its arguments to the shared
 * fit (sharedFit.ts: one fit per data version, cached, warm-started per formula cell, run off
 * the page thread for large ranges) and shapes the answer (worksheetResults.ts). Failures
 * become cell errors with a message (toWorksheetError.ts). The JSDoc on each function is the
 * only source of the generated functions.json (custom-functions-metadata-plugin); never edit
 * that file by hand.
 */
import "./outsideExcel";
import { sharedFit, sharedScan } from "./sharedFit";
import { worksheetCall } from "./toWorksheetError";
import { checkTable, componentTable, labelColumn, membershipTable, predictionTable, scanTable } from "./worksheetResults";

/**
 * Fits K components (a component is a group of rows sharing one linear regression of the outcome on the predictors). Returns one row per component: component number, weight (%), noise SD, intercept, then one coefficient per predictor.
 * @customfunction FIT
 * @helpurl https://localhost:3000/help.html#skein-fit
 * @param y The outcome: one column of numbers. Rows with a blank, text or logical cell in y or in a numeric x column are skipped.
 * @param x The predictors: one or more columns over the same rows as y, of numbers or of text categories such as regions or yes/no (each made into indicator columns).
 * @param [k] Number of components (K), a whole number from 1 to 50. Left out: the K that SKEIN.SCAN suggests (kmax 5, or fewer when rows are few).
 * @param [settings] Text such as "seed=7; intercept=no; model=joint", or a two-column range of names and values.
 * @param invocation Supplied by Excel: the formula's cell, and cancellation when its inputs change.
 * @returns One row per component (a header row when settings say headers=yes).
 * @requiresAddress
 * @cancelable
 */
export async function fit(y: any[][], x: any[][], k?: number, settings?: any[][], invocation?: CustomFunctions.CancelableInvocation): Promise<any[][]> {
  return worksheetCall(async () => {
    const answer = await sharedFit(y, x, k, settings, invocation);
    return componentTable(answer.shared, answer.settings);
  });
}

/**
 * For each row of the data, its component: the one it most probably belongs to; "" for rows that were skipped. Lines up with the input rows.
 * @customfunction LABELS
 * @helpurl https://localhost:3000/help.html#skein-labels
 * @param y The outcome: one column of numbers. Rows with a blank, text or logical cell in y or in a numeric x column are skipped.
 * @param x The predictors: one or more columns over the same rows as y, of numbers or of text categories such as regions or yes/no (each made into indicator columns).
 * @param [k] Number of components (K), a whole number from 1 to 50. Left out: the K that SKEIN.SCAN suggests (kmax 5, or fewer when rows are few).
 * @param [settings] Text such as "seed=7; intercept=no; model=joint", or a two-column range of names and values.
 * @param invocation Supplied by Excel: the formula's cell, and cancellation when its inputs change.
 * @returns One component number per input row.
 * @requiresAddress
 * @cancelable
 */
export async function labels(y: any[][], x: any[][], k?: number, settings?: any[][], invocation?: CustomFunctions.CancelableInvocation): Promise<any[][]> {
  return worksheetCall(async () => {
    const answer = await sharedFit(y, x, k, settings, invocation);
    return labelColumn(answer.shared, answer.settings);
  });
}

/**
 * For each row of the data, its membership in each component: the probability that it belongs there (one column per component; each row adds up to 1); "" for rows that were skipped.
 * @customfunction MEMBERSHIP
 * @helpurl https://localhost:3000/help.html#skein-membership
 * @param y The outcome: one column of numbers. Rows with a blank, text or logical cell in y or in a numeric x column are skipped.
 * @param x The predictors: one or more columns over the same rows as y, of numbers or of text categories such as regions or yes/no (each made into indicator columns).
 * @param [k] Number of components (K), a whole number from 1 to 50. Left out: the K that SKEIN.SCAN suggests (kmax 5, or fewer when rows are few).
 * @param [settings] Text such as "seed=7; intercept=no; model=joint", or a two-column range of names and values.
 * @param invocation Supplied by Excel: the formula's cell, and cancellation when its inputs change.
 * @returns One row per input row, one column per component.
 * @requiresAddress
 * @cancelable
 */
export async function membership(y: any[][], x: any[][], k?: number, settings?: any[][], invocation?: CustomFunctions.CancelableInvocation): Promise<any[][]> {
  return worksheetCall(async () => {
    const answer = await sharedFit(y, x, k, settings, invocation);
    return membershipTable(answer.shared, answer.settings);
  });
}

/**
 * Fits 1 to kmax components and compares them, to help choose how many there are. One row per K: BIC, ICL, log-likelihood, smallest gap (noise SDs), starts agree, converged, whether this K is suggested, and a note saying why any other K is not.
 * @customfunction SCAN
 * @helpurl https://localhost:3000/help.html#skein-scan
 * @param y The outcome: one column of numbers. Rows with a blank, text or logical cell in y or in a numeric x column are skipped.
 * @param x The predictors: one or more columns over the same rows as y, of numbers or of text categories such as regions or yes/no (each made into indicator columns).
 * @param [kmax] Largest number of components to try, from 1 to 50 (default 5, or fewer when there are few rows).
 * @param [settings] Text such as "seed=7; intercept=no; model=joint", or a two-column range of names and values.
 * @param invocation Supplied by Excel: the formula's cell, and cancellation when its inputs change.
 * @returns One row per number of components.
 * @requiresAddress
 * @cancelable
 */
export async function scan(y: any[][], x: any[][], kmax?: number, settings?: any[][], invocation?: CustomFunctions.CancelableInvocation): Promise<any[][]> {
  return worksheetCall(async () => {
    const answer = await sharedScan(y, x, kmax, settings, invocation);
    return scanTable(answer.shared, answer.settings);
  });
}

/**
 * How far to trust the fit: K, whether the starts agree and the fit converged, the smallest gap (noise SDs), misassigned rows (%), membership clarity, the smallest weight (%), rows used and skipped, stray rows (rows no component explains), and warnings with what to try.
 * @customfunction CHECK
 * @helpurl https://localhost:3000/help.html#skein-check
 * @param y The outcome: one column of numbers. Rows with a blank, text or logical cell in y or in a numeric x column are skipped.
 * @param x The predictors: one or more columns over the same rows as y, of numbers or of text categories such as regions or yes/no (each made into indicator columns).
 * @param [k] Number of components (K), a whole number from 1 to 50. Left out: the K that SKEIN.SCAN suggests (kmax 5, or fewer when rows are few).
 * @param [settings] Text such as "seed=7; intercept=no; model=joint", or a two-column range of names and values.
 * @param invocation Supplied by Excel: the formula's cell, and cancellation when its inputs change.
 * @returns A two-column table of checks and their values.
 * @requiresAddress
 * @cancelable
 */
export async function check(y: any[][], x: any[][], k?: number, settings?: any[][], invocation?: CustomFunctions.CancelableInvocation): Promise<any[][]> {
  return worksheetCall(async () => {
    const answer = await sharedFit(y, x, k, settings, invocation);
    return checkTable(answer.shared, answer.settings, answer.kFromScan);
  });
}

/**
 * Predicts the outcome for new rows of predictors: one column per component, then the weighted prediction (weighted by where the new row lies under model=joint, by the component weights otherwise).
 * @customfunction PREDICT
 * @helpurl https://localhost:3000/help.html#skein-predict
 * @param y The outcome the components are fitted to: one column of numbers.
 * @param x The predictors the components are fitted to, over the same rows as y.
 * @param new_rows The rows to predict for: the same predictor columns as x, in the same order (category columns take the same text values).
 * @param [k] Number of components (K), a whole number from 1 to 50. Left out: the K that SKEIN.SCAN suggests (kmax 5, or fewer when rows are few).
 * @param [settings] Text such as "seed=7; intercept=no; model=joint", or a two-column range of names and values.
 * @param invocation Supplied by Excel: the formula's cell, and cancellation when its inputs change.
 * @returns One row per row of new_rows.
 * @requiresAddress
 * @cancelable
 */
export async function predict(y: any[][], x: any[][], new_rows: any[][], k?: number, settings?: any[][], invocation?: CustomFunctions.CancelableInvocation): Promise<any[][]> {
  return worksheetCall(async () => {
    const answer = await sharedFit(y, x, k, settings, invocation);
    return predictionTable(answer.shared, new_rows, answer.settings);
  });
}
