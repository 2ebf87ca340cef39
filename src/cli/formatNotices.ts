/**
 * The notices of reading a data file (encoding, sheet, conversions, renamed headers,
 * columns left out) as a block of text after a command's table; "" when there are none.
 */
export function formatNotices(notices: readonly string[], heading = "How the file was read:"): string {
  if (notices.length === 0) return "";
  return ["", heading, ...notices.map((notice) => `  - ${notice}`)].join("\n") + "\n";
}
