/*
 * Ribbon commands. They run in the shared runtime page (manifest FunctionFile =
 * taskpane.html), beside the worksheet functions and the task pane.
 */

/** Recalculates every formula in the workbook, so every SKEIN formula refits now. */
async function refitAll(event: Office.AddinCommands.Event): Promise<void> {
  try {
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
