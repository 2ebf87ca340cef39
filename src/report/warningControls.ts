import { PARTLY_EXACT } from "../engine/exactFit";

/** How a host names its controls for more iterations and more random starts. */
export interface HostControls {
  /** "--max-iterations", "the max_iterations setting". */
  iterations: string;
  /** "--restarts", "the restarts setting". */
  restarts: string;
}

/**
 * The engine's advice names only what every surface has (another seed, fewer components); a
 * host with controls for more iterations or more starts adds them to the warnings they help:
 * "Not converged:" and "Partly exact:". Other warnings come back as they are.
 */
export function withHostControls(warning: string, controls: HostControls): string {
  if (/^Not converged:/.test(warning)) return `${warning.replace(/\.$/, "")}, or allow more iterations with ${controls.iterations}.`;
  if (warning.startsWith(`${PARTLY_EXACT}:`)) return `${warning.replace(/\.$/, "")}, or more restarts with ${controls.restarts}.`;
  return warning;
}
