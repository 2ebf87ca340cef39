import { SkeinError, type SkeinErrorCode } from "../src/engine/errors";
import type { CancelSignal, MixtureFit, MixtureOptions, RegressionData } from "../src/engine/mixtureTypes";
import type { ScanOptions, ScanResult, SeparationReport, StandardErrorReport } from "../src/engine/trustTypes";

export type FitDescription = { separation: SeparationReport; errors: StandardErrorReport | null; errorsProblem: string | null };

type PlainScanOptions = Omit<ScanOptions, "signal" | "onProgress">;
type PlainFitOptions = Omit<MixtureOptions, "signal">;

export type WorkRequest =
  | { id: number; kind: "scan"; data: RegressionData; scan: PlainScanOptions }
  | { id: number; kind: "fit"; data: RegressionData; fit: PlainFitOptions }
  | { id: number; kind: "describe"; data: RegressionData; target: MixtureFit };

export type WorkReply =
  | { id: number; kind: "progress"; k: number; kMax: number }
  | { id: number; kind: "scan"; result: ScanResult }
  | { id: number; kind: "fit"; fit: MixtureFit }
  | { id: number; kind: "describe"; description: FitDescription }
  | { id: number; kind: "error"; code: SkeinErrorCode; message: string };

/** What the pane asks of the engine. Every call can be abandoned through its signal. */
export interface PaneEngine {
  scan(data: RegressionData, options: PlainScanOptions, onProgress: (k: number, kMax: number) => void, signal: CancelSignal): Promise<ScanResult>;
  fit(data: RegressionData, options: PlainFitOptions, signal: CancelSignal): Promise<MixtureFit>;
  describe(data: RegressionData, fit: MixtureFit): Promise<FitDescription>;
}

/** A cancel flag the pane raises; `onAbort` lets the worker engine stop at once instead of at the next check. */
export class CancelFlag implements CancelSignal {
  aborted = false;
  private listeners: (() => void)[] = [];
  abort(): void {
    if (this.aborted) return;
    this.aborted = true;
    for (const listener of this.listeners) listener();
  }
  onAbort(listener: () => void): void {
    this.listeners.push(listener);
  }
}

export function cancelled(): SkeinError {
  return new SkeinError("cancelled", "The scan was cancelled; press Run scan to start again.");
}

/**
 * Runs the engine in a Web Worker. A cancelled call terminates the worker (the
 * engine's own checks would only stop it between passes); the next call starts
 * a new one.
 */
export class WorkerEngine implements PaneEngine {
  private worker: Worker | null = null;
  private nextId = 1;
  private readonly pending = new Map<number, { resolve: (reply: WorkReply) => void; reject: (error: Error) => void; progress?: (k: number, kMax: number) => void }>();

  constructor(private readonly makeWorker: () => Worker) {}

  private ensureWorker(): Worker {
    if (this.worker) return this.worker;
    const worker = this.makeWorker();
    worker.onmessage = (event: MessageEvent<WorkReply>) => {
      const reply = event.data;
      const waiting = this.pending.get(reply.id);
      if (!waiting) return;
      if (reply.kind === "progress") {
        waiting.progress?.(reply.k, reply.kMax);
        return;
      }
      this.pending.delete(reply.id);
      if (reply.kind === "error") waiting.reject(new SkeinError(reply.code, reply.message));
      else waiting.resolve(reply);
    };
    worker.onerror = (event) => {
      const message = `The engine stopped unexpectedly (${event.message || "worker error"}); reload the pane and try again.`;
      for (const waiting of this.pending.values()) waiting.reject(new SkeinError("numeric", message));
      this.pending.clear();
      this.worker?.terminate();
      this.worker = null;
    };
    this.worker = worker;
    return worker;
  }

  private call(request: WorkRequest, signal?: CancelFlag | CancelSignal, progress?: (k: number, kMax: number) => void): Promise<WorkReply> {
    if (signal?.aborted) return Promise.reject(cancelled());
    const worker = this.ensureWorker();
    return new Promise<WorkReply>((resolve, reject) => {
      this.pending.set(request.id, { resolve, reject, progress });
      if (signal instanceof CancelFlag) {
        signal.onAbort(() => {
          if (!this.pending.has(request.id)) return;
          // Everything in flight goes down with the worker.
          for (const waiting of this.pending.values()) waiting.reject(cancelled());
          this.pending.clear();
          worker.terminate();
          if (this.worker === worker) this.worker = null;
        });
      }
      worker.postMessage(request);
    });
  }

  async scan(data: RegressionData, options: PlainScanOptions, onProgress: (k: number, kMax: number) => void, signal: CancelSignal): Promise<ScanResult> {
    const reply = await this.call({ id: this.nextId++, kind: "scan", data, scan: options }, signal, onProgress);
    return (reply as Extract<WorkReply, { kind: "scan" }>).result;
  }

  async fit(data: RegressionData, options: PlainFitOptions, signal: CancelSignal): Promise<MixtureFit> {
    const reply = await this.call({ id: this.nextId++, kind: "fit", data, fit: options }, signal);
    return (reply as Extract<WorkReply, { kind: "fit" }>).fit;
  }

  async describe(data: RegressionData, fit: MixtureFit): Promise<FitDescription> {
    const reply = await this.call({ id: this.nextId++, kind: "describe", data, target: fit });
    return (reply as Extract<WorkReply, { kind: "describe" }>).description;
  }
}

/**
 * Runs the engine on the pane's own thread (tests; browsers without workers).
 * Progress yields to the event loop between K, so the bar repaints and a cancel
 * click is seen at the next K.
 */
export class InlineEngine implements PaneEngine {
  constructor(private readonly calls: typeof import("./engineCalls")) {}

  async scan(data: RegressionData, options: PlainScanOptions, onProgress: (k: number, kMax: number) => void, signal: CancelSignal): Promise<ScanResult> {
    if (signal.aborted) throw cancelled();
    await yieldToPage();
    const result = await this.calls.runScan(data, { ...options, signal, onProgress });
    if (signal.aborted) throw cancelled();
    return result;
  }

  async fit(data: RegressionData, options: PlainFitOptions, signal: CancelSignal): Promise<MixtureFit> {
    if (signal.aborted) throw cancelled();
    return this.calls.runFit(data, { ...options, signal });
  }

  async describe(data: RegressionData, fit: MixtureFit): Promise<FitDescription> {
    return this.calls.describeFit(data, fit);
  }
}

function yieldToPage(): Promise<void> {
  return new Promise((resolve) => setTimeout(resolve, 0));
}
