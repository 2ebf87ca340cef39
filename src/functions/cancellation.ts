/**
 * A cancel flag the engine can read (CancelSignal: it checks `aborted` between passes) that
 * also tells listeners when it is raised, so a fit running in a Web Worker can be stopped at
 * once by terminating the worker.
 */
import type { CancelSignal } from "../engine/mixtureTypes";

export class Cancellation implements CancelSignal {
  private raised = false;
  private readonly listeners: (() => void)[] = [];

  get aborted(): boolean {
    return this.raised;
  }

  /** Runs `listener` when the flag is raised (at once if it already is). */
  onAbort(listener: () => void): void {
    if (this.raised) listener();
    else this.listeners.push(listener);
  }

  abort(): void {
    if (this.raised) return;
    this.raised = true;
    for (const listener of this.listeners.splice(0)) listener();
  }
}
