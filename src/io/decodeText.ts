/**
 * The text of a file's bytes, whatever encoding a spreadsheet or editor saved
 * it in: UTF-8 with or without a byte-order mark, UTF-16 (little or big
 * endian) with a byte-order mark, and otherwise Windows-1252, the usual
 * encoding of files saved as "CSV" by Western-European Windows systems, when
 * the bytes are not valid UTF-8. Host-free: the command line and the pane
 * both use it.
 */
export interface DecodedText {
  text: string;
  /** The encoding the bytes were read in: "UTF-8", "UTF-16 LE", "UTF-16 BE" or "Windows-1252". */
  encoding: string;
  /** Whether the encoding was a guess the user should hear about (not UTF-8). */
  noteworthy: boolean;
}

export function decodeText(bytes: Uint8Array): DecodedText {
  if (bytes.length >= 3 && bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf) {
    return { text: new TextDecoder("utf-8").decode(bytes.subarray(3)), encoding: "UTF-8", noteworthy: false };
  }
  if (bytes.length >= 2 && bytes[0] === 0xff && bytes[1] === 0xfe) {
    return { text: new TextDecoder("utf-16le").decode(bytes.subarray(2)), encoding: "UTF-16 LE", noteworthy: true };
  }
  if (bytes.length >= 2 && bytes[0] === 0xfe && bytes[1] === 0xff) {
    return { text: new TextDecoder("utf-16be").decode(bytes.subarray(2)), encoding: "UTF-16 BE", noteworthy: true };
  }
  // UTF-16 without a byte-order mark: text of Latin letters has a zero byte in
  // every other position, which neither UTF-8 text nor Windows-1252 text has.
  const unmarked = unmarkedUtf16(bytes);
  if (unmarked) return { text: new TextDecoder(unmarked === "LE" ? "utf-16le" : "utf-16be").decode(bytes), encoding: `UTF-16 ${unmarked}`, noteworthy: true };
  try {
    return { text: new TextDecoder("utf-8", { fatal: true }).decode(bytes), encoding: "UTF-8", noteworthy: false };
  } catch {
    return { text: new TextDecoder("windows-1252").decode(bytes), encoding: "Windows-1252", noteworthy: true };
  }
}

/** "LE" or "BE" when at least 90% of the first bytes' odd (LE) or even (BE) positions are zero. */
function unmarkedUtf16(bytes: Uint8Array): "LE" | "BE" | undefined {
  const pairs = Math.min(bytes.length >> 1, 512);
  if (pairs < 2) return undefined;
  let zeroHigh = 0;
  let zeroLow = 0;
  for (let i = 0; i < pairs; i++) {
    if (bytes[2 * i] === 0) zeroLow++;
    if (bytes[2 * i + 1] === 0) zeroHigh++;
  }
  if (zeroHigh >= 0.9 * pairs && zeroLow === 0) return "LE";
  if (zeroLow >= 0.9 * pairs && zeroHigh === 0) return "BE";
  return undefined;
}
