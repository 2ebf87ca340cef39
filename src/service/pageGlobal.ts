/**
 * Where the page keeps its one engine service. The worksheet functions, the ribbon commands
 * and the pane are separate webpack entries on the shared-runtime page, each with its own copy
 * of the modules it imports; the service lives on the page's global object so all of them use
 * the same one. This module imports nothing, so a small entry (the ribbon commands) can reach
 * the service without bundling the engine.
 */
import type { EngineService } from "./engineService";

const pageGlobal = globalThis as { skeinEngineService?: EngineService };

/** The page's engine service, if an entry has made it yet. */
export function pageEngineService(): EngineService | undefined {
  return pageGlobal.skeinEngineService;
}

/** The page's engine service, made with `make` by the first entry that asks. */
export function sharedEngineService(make: () => EngineService): EngineService {
  return (pageGlobal.skeinEngineService ??= make());
}
