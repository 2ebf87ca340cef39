import type { CommandIO } from "./main";

/** A scan quicker than this shows no progress: a line that flashes by helps nobody. */
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
