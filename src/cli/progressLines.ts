import type { CancelSignal } from "../engine/mixtureTypes";
import type { CommandIO } from "./commandIO";

/** A scan or fit quicker than this shows no progress: a line that flashes by helps nobody. */
export const PROGRESS_AFTER_MS = 1500;

/**
 * Progress of a scan on stderr, once it has run for PROGRESS_AFTER_MS: one line, rewritten
 * after each K. Only when stderr is a terminal (io.progress): piped or captured stderr stays
 * free of carriage-return lines, and stdout (the table or the JSON) is never touched.
 */
export function scanProgress(io: Pick<CommandIO, "stderr" | "progress">, now: () => number = () => performance.now()): { onProgress: (k: number, kMax: number) => void; finish: () => void } {
  const started = now();
  let shown = false;
  return {
    onProgress(k, kMax) {
      if (!io.progress) return;
      const elapsed = now() - started;
      if (elapsed < PROGRESS_AFTER_MS) return;
      const next = k < kMax ? `, fitting K = ${k + 1}` : "";
      io.stderr(`\rscan: K = 1 to ${k} of ${kMax} done in ${(elapsed / 1000).toFixed(1)} s${next}${k < kMax ? "…" : "."}   `);
      shown = true;
    },
    finish() {
      if (shown) io.stderr("\n");
      shown = false;
    },
  };
}

/** Seconds between rewrites of a single fit's progress line. */
const FIT_PROGRESS_EVERY_MS = 1000;

/**
 * Progress of one fit (K given) on stderr, under the same rules as a scan's: nothing before
 * PROGRESS_AFTER_MS or when stderr is not a terminal. The engine asks its cancel signal between
 * steps (every EM iteration, every start); this signal never cancels, and each question is the
 * heartbeat that rewrites the line at most once a second. The time is the fit's elapsed time.
 */
export function fitProgress(io: Pick<CommandIO, "stderr" | "progress">, k: number, now: () => number = () => performance.now()): { signal: CancelSignal; finish: () => void } {
  const started = now();
  let shownAt = -Infinity;
  return {
    signal: {
      get aborted() {
        if (!io.progress) return false;
        const time = now();
        const elapsed = time - started;
        if (elapsed >= PROGRESS_AFTER_MS && time - shownAt >= FIT_PROGRESS_EVERY_MS) {
          io.stderr(`\rfit: K = ${k}, ${(elapsed / 1000).toFixed(0)} s so far…   `);
          shownAt = time;
        }
        return false;
      },
    },
    finish() {
      if (shownAt === -Infinity) return;
      io.stderr(`\rfit: K = ${k} done in ${((now() - started) / 1000).toFixed(1)} s.   \n`);
      shownAt = -Infinity;
    },
  };
}
