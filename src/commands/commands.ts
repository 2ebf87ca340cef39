/*
 * Ribbon commands. They run in the shared runtime page (manifest FunctionFile =
 * taskpane.html), beside the worksheet functions and the task pane, and reach the engine
 * through the same engine service.
 */
import { pageEngineService } from "../service/pageGlobal";

/**
 * Refits every SKEIN formula now: the service forgets its cached results (a full
 * recalculation would otherwise be answered from the cache), keeps each formula's last fit so
 * the refits are warm-started from it and keep its component numbers, and Excel recalculates
 * the workbook.
 */
export async function refitAll(event: Office.AddinCommands.Event): Promise<void> {
  try {
    // No service yet means no formula has run: nothing cached to forget.
    pageEngineService()?.forgetResults();
    await Excel.run(async (context) => {
      context.workbook.application.calculate(Excel.CalculationType.full);
      await context.sync();
    });
  } finally {
    event.completed();
  }
}

// Outside Office (the pane's plain-browser mode) there is no ribbon to serve.
if (typeof Office !== "undefined") {
  Office.onReady(() => {
    Office.actions.associate("refitAll", refitAll);
  });
}
