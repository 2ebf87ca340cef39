/**
 * Runs scans and fits off the pane's thread, so the pane stays responsive during a
 * long scan. Cancelling terminates the worker; the pane starts a fresh one.
 * Messages in: WorkRequest; out: WorkReply (see paneEngine.ts).
 */
import type { SkeinErrorCode } from "../src/engine/errors";
import { describeFit, runFit, runScan } from "./engineCalls";
import type { WorkReply, WorkRequest } from "./paneEngine";

const scope = self as unknown as { onmessage: ((e: MessageEvent<WorkRequest>) => void) | null; postMessage(message: WorkReply): void };

scope.onmessage = async (event) => {
  const request = event.data;
  try {
    if (request.kind === "scan") {
      const result = await runScan(request.data, { ...request.scan, onProgress: (k, kMax) => scope.postMessage({ id: request.id, kind: "progress", k, kMax }) });
      scope.postMessage({ id: request.id, kind: "scan", result });
    } else if (request.kind === "fit") {
      const fit = await runFit(request.data, request.fit);
      scope.postMessage({ id: request.id, kind: "fit", fit });
    } else {
      scope.postMessage({ id: request.id, kind: "describe", description: describeFit(request.data, request.target) });
    }
  } catch (error) {
    const code = (error as { code?: SkeinErrorCode }).code ?? "numeric";
    scope.postMessage({ id: request.id, kind: "error", code, message: error instanceof Error ? error.message : String(error) });
  }
};
