/*
 * Task pane entry: decides where the data live (Excel, or the built-in sheet of
 * plain-browser mode) and builds the pane on the page's engine service (shared with
 * the worksheet functions and the ribbon commands).
 */
import { cssColourVariables } from "../src/report/componentStyle";
import styles from "./taskpane.css";
import { ExcelHost } from "./excelHost";
import { mountBrowserPane, mountExcelPane } from "./mountPane";
import { engineService } from "../src/service/engineService";
import { detectHost } from "./startup";

async function start(): Promise<void> {
  const style = document.createElement("style");
  style.textContent = cssColourVariables() + styles;
  document.head.appendChild(style);
  const root = document.getElementById("app")!;
  const status = document.getElementById("status");
  const where = await detectHost();
  status?.remove();
  const engine = engineService;
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
