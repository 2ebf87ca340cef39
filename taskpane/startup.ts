/** How long the pane waits for office.js to report a host before running in plain-browser mode. */
export const OFFICE_WAIT_MS = 3000;

/**
 * Resolves to "excel" when office.js is loaded and reports Excel, otherwise (no
 * office.js, another or no host, or no answer within `waitMs`) to "browser".
 */
export function detectHost(waitMs = OFFICE_WAIT_MS): Promise<"excel" | "browser"> {
  const office = (globalThis as { Office?: typeof Office }).Office;
  if (!office || typeof office.onReady !== "function") return Promise.resolve("browser");
  return new Promise((resolve) => {
    const timer = setTimeout(() => resolve("browser"), waitMs);
    office
      .onReady()
      .then((info) => {
        clearTimeout(timer);
        resolve(info && info.host === office.HostType.Excel ? "excel" : "browser");
      })
      .catch(() => {
        clearTimeout(timer);
        resolve("browser");
      });
  });
}
