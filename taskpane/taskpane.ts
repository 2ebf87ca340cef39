/*
 * Task pane entry. The full pane (Data, How many components, Components, Checks,
 * Put in sheet) is built on top of this; here it reports whether it runs inside Excel.
 */
const statusLine = document.getElementById("status");
if (statusLine) {
  statusLine.textContent = typeof Office === "undefined" ? "Running outside Excel (plain-browser mode)." : "Skein is loaded.";
}
export {};
