/**
 * Draws Skein's own icon (three loose threads crossing, each a straight line of its
 * own colour on a light tile) at the sizes Office asks for, as PNG files in assets/.
 * Run with `npx tsx scripts/makeIcons.ts`; the PNGs are committed.
 */
import { writeFileSync, mkdirSync } from "node:fs";
import { deflateSync } from "node:zlib";
import { hexToRgb } from "../src/report/colourSpace";
import { COMPONENT_COLOURS } from "../src/report/componentStyle";

/** The threads take the first three component colours, as components 1 to 3 are drawn everywhere. */
const rgb255 = (hex: string) => hexToRgb(hex).map((c) => Math.round(c * 255)) as [number, number, number];
const threads: { colour: [number, number, number]; from: [number, number]; to: [number, number] }[] = [
  { colour: rgb255(COMPONENT_COLOURS[0]), from: [0.12, 0.78], to: [0.88, 0.3] },
  { colour: rgb255(COMPONENT_COLOURS[1]), from: [0.12, 0.42], to: [0.88, 0.7] },
  { colour: rgb255(COMPONENT_COLOURS[2]), from: [0.2, 0.15], to: [0.72, 0.88] },
];

function crc32(bytes: Uint8Array): number {
  let crc = 0xffffffff;
  for (const byte of bytes) {
    crc ^= byte;
    for (let k = 0; k < 8; k++) crc = (crc >>> 1) ^ (0xedb88320 & -(crc & 1));
  }
  return (crc ^ 0xffffffff) >>> 0;
}

function chunk(type: string, data: Uint8Array): Buffer {
  const length = Buffer.alloc(4);
  length.writeUInt32BE(data.length);
  const body = Buffer.concat([Buffer.from(type, "ascii"), Buffer.from(data)]);
  const crc = Buffer.alloc(4);
  crc.writeUInt32BE(crc32(body));
  return Buffer.concat([length, body, crc]);
}

function distanceToSegment(px: number, py: number, [ax, ay]: [number, number], [bx, by]: [number, number]): number {
  const dx = bx - ax;
  const dy = by - ay;
  const t = Math.max(0, Math.min(1, ((px - ax) * dx + (py - ay) * dy) / (dx * dx + dy * dy)));
  return Math.hypot(px - (ax + t * dx), py - (ay + t * dy));
}

function draw(size: number): Buffer {
  const stride = size * 4 + 1;
  const pixels = Buffer.alloc(stride * size);
  const halfWidth = Math.max(0.045, 1.2 / size);
  for (let row = 0; row < size; row++) {
    pixels[row * stride] = 0; // filter: none
    for (let col = 0; col < size; col++) {
      const x = (col + 0.5) / size;
      const y = (row + 0.5) / size;
      // Rounded light tile.
      const corner = 0.18;
      const cx = Math.min(Math.max(x, corner), 1 - corner);
      const cy = Math.min(Math.max(y, corner), 1 - corner);
      const inside = Math.hypot(x - cx, y - cy) <= corner;
      let rgba: [number, number, number, number] = inside ? [246, 243, 236, 255] : [0, 0, 0, 0];
      for (const thread of threads) {
        const d = distanceToSegment(x, y, thread.from, thread.to);
        if (inside && d < halfWidth) {
          const edge = Math.min(1, (halfWidth - d) * size);
          rgba = [0, 1, 2].map((c) => Math.round(rgba[c] * (1 - edge) + thread.colour[c] * edge)) as unknown as [number, number, number, number];
          rgba[3] = 255;
        }
      }
      pixels.set(rgba, row * stride + 1 + col * 4);
    }
  }
  const header = Buffer.alloc(13);
  header.writeUInt32BE(size, 0);
  header.writeUInt32BE(size, 4);
  header[8] = 8; // bit depth
  header[9] = 6; // RGBA
  return Buffer.concat([
    Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
    chunk("IHDR", header),
    chunk("IDAT", deflateSync(pixels)),
    chunk("IEND", new Uint8Array(0)),
  ]);
}

mkdirSync("assets", { recursive: true });
for (const size of [16, 32, 64, 80, 128]) writeFileSync(`assets/icon-${size}.png`, draw(size));
