/**
 * The one cancel flag of the engine service: the engine reads it (CancelSignal: it checks
 * `aborted` between passes) and listeners hear when it is raised, so a fit running in a Web
 * Worker is stopped at once by terminating the worker. The task pane raises it when the user
 * cancels or a newer request replaces a running one; the worksheet functions when Excel
 * cancels a call.
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
