/**
 * The Web Worker that runs large fits and scans off Excel's add-in thread (see engineRunner.ts).
 * In: WorkerRequest. Out: WorkerReply. Cancelling is done by the page terminating the worker,
 * so no cancel message is needed; the signal given to the engine is never raised here.
 */
import { runFitJob, runScanJob, type EngineJob } from "./fitJobs";
import type { WorkerReply, WorkerRequest } from "./engineRunner";

const scope = self as unknown as {
  onmessage: ((event: MessageEvent<WorkerRequest>) => void) | null;
  postMessage(message: WorkerReply): void;
};

const neverCancelled = { aborted: false };

async function run(job: EngineJob): Promise<unknown> {
  return job.kind === "fit" ? runFitJob(job, neverCancelled) : runScanJob(job, neverCancelled);
}

scope.onmessage = (event) => {
  const { id, job } = event.data;
  run(job).then(
    (result) => scope.postMessage({ id, ok: true, result }),
    (error: unknown) => {
      const code = (error as { code?: unknown })?.code;
      scope.postMessage({
        id,
        ok: false,
        code: typeof code === "string" ? code : undefined,
        message: error instanceof Error ? error.message : String(error),
      });
    },
  );
};
