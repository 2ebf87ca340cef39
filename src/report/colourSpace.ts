/**
 * Colour arithmetic for choosing and checking Skein's colours: sRGB hex codes,
 * linear light, OKLab and its polar form OKLCh, colour differences, and the
 * lightness a greyscale print keeps. No DOM and no Node.
 *
 * Sources: the sRGB transfer curve from IEC 61966-2-1:1999; OKLab from
 * B. Ottosson, "A perceptual color space for image processing" (2020), whose
 * matrices are also those of the CSS Color Module Level 4; CIE L* from
 * relative luminance as in CIE 15:2004 (CIELAB); the contrast ratio from
 * WCAG 2.1 (definitions "relative luminance" and "contrast ratio").
 */

/** Three channels, each 0..1 (sRGB or linear light) or OKLab coordinates. */
export type Triple = [number, number, number];

/** "#rrggbb" → gamma-encoded sRGB channels in 0..1. */
export function hexToRgb(hex: string): Triple {
  const match = /^#([0-9a-f]{6})$/i.exec(hex);
  if (!match) throw new Error(`"${hex}" is not a colour of the form #rrggbb`);
  const value = parseInt(match[1], 16);
  return [((value >> 16) & 255) / 255, ((value >> 8) & 255) / 255, (value & 255) / 255];
}

/** Gamma-encoded sRGB channels (clipped to 0..1) → "#rrggbb". */
export function rgbToHex(rgb: Triple): string {
  return `#${rgb.map((c) => Math.round(Math.min(1, Math.max(0, c)) * 255).toString(16).padStart(2, "0")).join("")}`;
}

/** The sRGB decoding curve (IEC 61966-2-1): encoded channel → linear light. */
export function toLinear(channel: number): number {
  return channel <= 0.04045 ? channel / 12.92 : ((channel + 0.055) / 1.055) ** 2.4;
}

/** The sRGB encoding curve: linear light → encoded channel. */
export function fromLinear(channel: number): number {
  return channel <= 0.0031308 ? channel * 12.92 : 1.055 * channel ** (1 / 2.4) - 0.055;
}

export function hexToLinear(hex: string): Triple {
  const [r, g, b] = hexToRgb(hex);
  return [toLinear(r), toLinear(g), toLinear(b)];
}

/** Linear sRGB → OKLab (Ottosson 2020: linear sRGB → LMS, cube root, → Lab). */
export function linearToOklab([r, g, b]: Triple): Triple {
  const l = Math.cbrt(0.4122214708 * r + 0.5363325363 * g + 0.0514459929 * b);
  const m = Math.cbrt(0.2119034982 * r + 0.6806995451 * g + 0.1073969566 * b);
  const s = Math.cbrt(0.0883024619 * r + 0.2817188376 * g + 0.6299787005 * b);
  return [
    0.2104542553 * l + 0.793617785 * m - 0.0040720468 * s,
    1.9779984951 * l - 2.428592205 * m + 0.4505937099 * s,
    0.0259040371 * l + 0.7827717662 * m - 0.808675766 * s,
  ];
}

/** OKLab → linear sRGB (the inverse matrices of the same source); may leave 0..1 when out of gamut. */
export function oklabToLinear([L, a, b]: Triple): Triple {
  const l = (L + 0.3963377774 * a + 0.2158037573 * b) ** 3;
  const m = (L - 0.1055613458 * a - 0.0638541728 * b) ** 3;
  const s = (L - 0.0894841775 * a - 1.291485548 * b) ** 3;
  return [
    4.0767416621 * l - 3.3077115913 * m + 0.2309699292 * s,
    -1.2684380046 * l + 2.6097574011 * m - 0.3413193965 * s,
    -0.0041960863 * l - 0.7034186147 * m + 1.707614701 * s,
  ];
}

export function hexToOklab(hex: string): Triple {
  return linearToOklab(hexToLinear(hex));
}

/** True when the linear channels lie inside the sRGB cube (with a small rounding allowance). */
export function inGamut(linear: Triple, allowance = 1e-6): boolean {
  return linear.every((c) => c >= -allowance && c <= 1 + allowance);
}

/** OKLCh (lightness 0..1, chroma, hue in degrees) → "#rrggbb", clipped to the sRGB cube. */
export function oklchToHex(lightness: number, chroma: number, hueDegrees: number): string {
  const h = (hueDegrees * Math.PI) / 180;
  const linear = oklabToLinear([lightness, chroma * Math.cos(h), chroma * Math.sin(h)]);
  return rgbToHex(linear.map(fromLinear) as Triple);
}

/** Euclidean distance in OKLab: the colour difference ΔE_OK (Ottosson 2020; as in CSS Color 4's deltaEOK). */
export function deltaEOk(p: Triple, q: Triple): number {
  return Math.hypot(p[0] - q[0], p[1] - q[1], p[2] - q[2]);
}

/** Relative luminance Y of linear sRGB (ITU-R BT.709 primaries, as WCAG 2.1 defines it). */
export function luminance([r, g, b]: Triple): number {
  return 0.2126 * r + 0.7152 * g + 0.0722 * b;
}

/**
 * CIE L* (0..100) of a relative luminance: the lightness a greyscale print or
 * a monochrome copy keeps of a colour (CIE 15:2004, L* = 116 f(Y) − 16).
 */
export function cieLightness(y: number): number {
  const f = y > (6 / 29) ** 3 ? Math.cbrt(y) : y / (3 * (6 / 29) ** 2) + 4 / 29;
  return 116 * f - 16;
}

/** WCAG 2.1 contrast ratio of two colours, 1 to 21. */
export function contrastRatio(first: string, second: string): number {
  const a = luminance(hexToLinear(first));
  const b = luminance(hexToLinear(second));
  return (Math.max(a, b) + 0.05) / (Math.min(a, b) + 0.05);
}
