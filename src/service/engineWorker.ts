/**
 * The engine worker: runs the engine service's requests off the page's thread (see
 * engineRunner.ts). In: WorkerRequest. Out: WorkerReply, with progress messages during a scan.
 * Cancelling is done by the page terminating the worker, so no cancel message is needed; the
 * signal given to the engine is never raised here.
 */
import { runEngineJob } from "./engineJobs";
import type { WorkerReply, WorkerRequest } from "./engineRunner";

const scope = self as unknown as {
  onmessage: ((event: MessageEvent<WorkerRequest>) => void) | null;
  postMessage(message: WorkerReply): void;
};

const neverCancelled = { aborted: false };

scope.onmessage = (event) => {
  const { id, job } = event.data;
  const onProgress = (k: number, kMax: number) => scope.postMessage({ id, kind: "progress", k, kMax });
  runEngineJob(job, neverCancelled, onProgress).then(
    (result) => scope.postMessage({ id, kind: "done", result }),
    (error: unknown) => {
      const code = (error as { code?: unknown })?.code;
      scope.postMessage({
        id,
        kind: "failed",
        code: typeof code === "string" ? code : undefined,
        message: error instanceof Error ? error.message : String(error),
      });
    },
  );
};
