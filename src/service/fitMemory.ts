/**
 * The last fit each viewer showed: a formula cell by its address (Excel passes it to functions
 * declared with @requiresAddress), the task pane by its own name. When a viewer's data
 * change, its refit starts from that fit (options.previous) and is renumbered to match it, so
 * component 1 stays component 1.
 *
 * Only what a warm start and the renumbering read is kept: the components and the fit's
 * description, not the per-row memberships, so a thousand remembered cells cost a few hundred
 * kilobytes however large their ranges were.
 */
import type { MixtureFit } from "../engine/mixtureTypes";

/** Viewers remembered; the least recently refreshed are forgotten first. */
export const VIEWER_LIMIT = 1000;

export interface FitShape {
  k: number;
  p: number;
  intercept: boolean;
  model: MixtureFit["model"];
}

export class FitMemory {
  private readonly fits = new Map<string, MixtureFit>();

  constructor(private readonly limit: number = VIEWER_LIMIT) {}

  /** The fit `viewer` showed last, when it has the same shape as the fit about to be made. */
  previousFor(viewer: string | undefined, shape: FitShape): MixtureFit | undefined {
    if (!viewer) return undefined;
    const fit = this.fits.get(viewer);
    if (fit === undefined) return undefined;
    const same = fit.k === shape.k && fit.p === shape.p && fit.intercept === shape.intercept && fit.model === shape.model;
    return same ? fit : undefined;
  }

  remember(viewer: string | undefined, fit: MixtureFit): void {
    if (!viewer) return;
    this.fits.delete(viewer);
    this.fits.set(viewer, slim(fit));
    if (this.fits.size > this.limit) {
      const oldest = this.fits.keys().next().value;
      if (oldest !== undefined) this.fits.delete(oldest);
    }
  }

  clear(): void {
    this.fits.clear();
  }

  get size(): number {
    return this.fits.size;
  }
}

function slim(fit: MixtureFit): MixtureFit {
  if (fit.memberships.length === 0) return fit;
  return {
    ...fit,
    memberships: new Float64Array(0),
    labels: new Int32Array(0),
    refinement: { ...fit.refinement, logLikelihoodPath: [] },
  };
}
