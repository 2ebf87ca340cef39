/**
 * The last fit each formula cell showed, by the cell's address (Excel passes it to functions
 * declared with @requiresAddress). When a formula's data change, its refit starts from that
 * fit (options.previous) and is renumbered to match it, so component 1 stays component 1.
 *
 * Only what a warm start and the renumbering read is kept: the components and the fit's
 * description, not the per-row memberships, so a thousand remembered cells cost a few hundred
 * kilobytes however large their ranges were.
 */
import type { MixtureFit } from "../engine/mixtureTypes";

/** Formula cells remembered; the least recently refreshed are forgotten first. */
export const ADDRESS_LIMIT = 1000;

export interface FitShape {
  k: number;
  p: number;
  intercept: boolean;
  model: MixtureFit["model"];
}

export class AddressMemory {
  private readonly fits = new Map<string, MixtureFit>();

  constructor(private readonly limit: number = ADDRESS_LIMIT) {}

  /** The fit last shown at `address`, when it has the same shape as the fit about to be made. */
  previousFor(address: string | undefined, shape: FitShape): MixtureFit | undefined {
    if (!address) return undefined;
    const fit = this.fits.get(address);
    if (fit === undefined) return undefined;
    const same = fit.k === shape.k && fit.p === shape.p && fit.intercept === shape.intercept && fit.model === shape.model;
    return same ? fit : undefined;
  }

  remember(address: string | undefined, fit: MixtureFit): void {
    if (!address) return;
    this.fits.delete(address);
    this.fits.set(address, slim(fit));
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
