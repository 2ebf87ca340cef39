/*
 * Task pane entry: decides where the data live (Excel, or the built-in sheet of
 * plain-browser mode), picks how the engine runs (a Web Worker where there is
 * one), and builds the pane.
 */
import { cssColourVariables } from "../src/report/componentStyle";
import styles from "./taskpane.css";
import { ExcelHost } from "./excelHost";
import { mountBrowserPane, mountExcelPane } from "./mountPane";
import { InlineEngine, WorkerEngine, type PaneEngine } from "./paneEngine";
import { detectHost } from "./startup";

function makeEngine(): Promise<PaneEngine> | PaneEngine {
  if (typeof Worker === "function") {
    return new WorkerEngine(() => new Worker(new URL("./scanWorker.ts", import.meta.url)));
  }
  return import("./engineCalls").then((calls) => new InlineEngine(calls));
}

async function start(): Promise<void> {
  const style = document.createElement("style");
  style.textContent = cssColourVariables() + styles;
  document.head.appendChild(style);
  const root = document.getElementById("app")!;
  const status = document.getElementById("status");
  const where = await detectHost();
  status?.remove();
  const engine = await makeEngine();
  const mounted = where === "excel"
    ? mountExcelPane(root, new ExcelHost(), engine)
    : mountBrowserPane(root, engine, async (url) => {
        const response = await fetch(url);
        if (!response.ok) throw new Error(`${url} answered ${response.status}`);
        return response.text();
      });
  document.body.dataset.mode = where;
  // For the browser test and for curious users: the pane's controller.
  (window as unknown as { skeinPane?: unknown }).skeinPane = mounted.pane;
}

if (document.readyState === "loading") document.addEventListener("DOMContentLoaded", () => void start());
else void start();
