/**
 * Derives Skein's component colours and interface colours by search, and
 * prints them for src/report/componentStyle.ts (where the values are pasted,
 * with the figures this prints). Run with `npx tsx scripts/choosePalette.ts`;
 * the search is seeded, so it prints the same colours every time.
 *
 * Component colours. The first SET_SIZE colours are searched jointly over
 * 8-bit sRGB (every candidate is a displayable hex code) by simulated
 * annealing (Kirkpatrick, Gelatt & Vecchi 1983) from several seeded starts,
 * maximising the smallest colour difference ΔE_OK (Euclidean OKLab, Ottosson
 * 2020) over every pair and four ways of seeing: normal vision and simulated
 * protanopia, deuteranopia and tritanopia (Machado, Oliveira & Fernandes
 * 2009, severity 1). Constraints, as penalties:
 * - each colour has a contrast ratio of at least 3:1 against the plot's paper
 *   (WCAG 2.1 success criterion 1.4.11, non-text contrast), so thin lines and
 *   small markers stay visible;
 * - each colour has OKLCh chroma of at least MIN_CHROMA and CIE L* of at
 *   least MIN_LIGHTNESS, so no component reads as the grey or near-black of
 *   axes and text (with the contrast rule, L* stays between 30 and about 62);
 * - each colour has OKLCh chroma of at most MAX_CHROMA, off the sRGB cube's
 *   most saturated corners (they glare on screen and colour printers do not
 *   reproduce them);
 * - the first GREY_COUNT colours differ pairwise by at least GREY_STEP in CIE
 *   L*, so they stay apart in a greyscale print.
 * Then the order: among all orders of the set that keep the lightness rule
 * for the first GREY_COUNT, the one whose prefixes (the colours of a 3-, 4-,
 * 5-component fit) have the largest smallest difference, compared prefix by
 * prefix; ties go to the order with darker colours first. Colours after the set are added one at a time,
 * each the candidate farthest (same measure) from all colours before it.
 *
 * Interface colours (alerts, cautions, the accent) are placed in OKLCh at hues
 * chosen here, with the lightness found by bisection so that text meets WCAG
 * 2.1 contrast (7:1 for text on its wash, 4.5:1 for white text on the accent).
 */
import { createRandom, type Random } from "../src/engine/random";
import { cieLightness, contrastRatio, deltaEOk, hexToLinear, linearToOklab, luminance, oklchToHex, rgbToHex, type Triple } from "../src/report/colourSpace";
import { DEFICIENCIES, simulateDeficiency } from "../src/report/colourVision";

const PAPER = "#fdfcf9";
const SET_SIZE = 6;
const TOTAL = 10;
const GREY_COUNT = 4;
const GREY_STEP = 9;
const MIN_CHROMA = 0.08;
const MAX_CHROMA = 0.25;
const MIN_LIGHTNESS = 30;
const MIN_CONTRAST = 3;
const NORMAL_MARGIN = 1.4;
/** Prefix sizes in the order they decide the colours' order: three components first, the commonest fit. */
const PREFIX_ORDER = [3, 4, 5];
const STARTS = 12;
const STEPS = 60_000;

/** A colour as the search sees it: its hex code and its OKLab under each way of seeing. */
interface Seen {
  hex: string;
  views: Triple[];
  lightness: number;
  chroma: number;
  contrast: number;
}

function see(hex: string): Seen {
  const linear = hexToLinear(hex);
  const normal = linearToOklab(linear);
  const views = [normal, ...DEFICIENCIES.map((d) => linearToOklab(simulateDeficiency(linear, d)))];
  return { hex, views, lightness: cieLightness(luminance(linear)), chroma: Math.hypot(normal[1], normal[2]), contrast: contrastRatio(hex, PAPER) };
}

/**
 * The smallest ΔE_OK over the four ways of seeing, with normal vision's
 * difference divided by NORMAL_MARGIN: most readers see every hue, so for them
 * the colours should differ by that much more than the smallest difference a
 * dichromat sees.
 */
function difference(a: Seen, b: Seen): number {
  let least = deltaEOk(a.views[0], b.views[0]) / NORMAL_MARGIN;
  for (let v = 1; v < a.views.length; v++) least = Math.min(least, deltaEOk(a.views[v], b.views[v]));
  return least;
}

function smallestDifference(colours: Seen[]): number {
  let least = Infinity;
  for (let i = 0; i < colours.length; i++) for (let j = i + 1; j < colours.length; j++) least = Math.min(least, difference(colours[i], colours[j]));
  return least;
}

function smallestLightnessStep(colours: Seen[]): number {
  let least = Infinity;
  for (let i = 0; i < colours.length; i++) for (let j = i + 1; j < colours.length; j++) least = Math.min(least, Math.abs(colours[i].lightness - colours[j].lightness));
  return least;
}

/** How far a colour breaks the per-colour constraints (0 when it keeps them). */
function colourPenalty(c: Seen): number {
  return Math.max(0, MIN_CONTRAST - c.contrast) + Math.max(0, MIN_CHROMA - c.chroma) * 10 + Math.max(0, c.chroma - MAX_CHROMA) * 10 + Math.max(0, MIN_LIGHTNESS - c.lightness) / 10;
}

/** The annealing score of a set: smallest difference, less penalties for broken constraints. */
function score(colours: Seen[]): number {
  let penalty = 0;
  for (const c of colours) penalty += colourPenalty(c);
  penalty += Math.max(0, GREY_STEP - smallestLightnessStep(colours.slice(0, GREY_COUNT))) / 50;
  return smallestDifference(colours) - penalty;
}

function randomHex(random: Random): string {
  return rgbToHex([random.next(), random.next(), random.next()]);
}

/** One channel of one colour moved by up to ±`reach` of 255 levels. */
function nudge(hex: string, random: Random, reach: number): string {
  const value = parseInt(hex.slice(1), 16);
  const channels = [(value >> 16) & 255, (value >> 8) & 255, value & 255];
  const channel = random.integer(3);
  channels[channel] = Math.min(255, Math.max(0, channels[channel] + Math.round((random.next() * 2 - 1) * reach)));
  return rgbToHex(channels.map((c) => c / 255) as Triple);
}

function anneal(random: Random): Seen[] {
  let current = Array.from({ length: SET_SIZE }, () => see(randomHex(random)));
  let currentScore = score(current);
  let best = current;
  let bestScore = currentScore;
  for (let step = 0; step < STEPS; step++) {
    const progress = step / STEPS;
    const temperature = 0.02 * (1 - progress) ** 2 + 1e-5;
    const reach = Math.max(1, Math.round(60 * (1 - progress)));
    const which = random.integer(SET_SIZE);
    const candidate = current.slice();
    candidate[which] = see(nudge(current[which].hex, random, reach));
    const candidateScore = score(candidate);
    if (candidateScore >= currentScore || random.next() < Math.exp((candidateScore - currentScore) / temperature)) {
      current = candidate;
      currentScore = candidateScore;
      if (currentScore > bestScore) {
        best = current;
        bestScore = currentScore;
      }
    }
  }
  return best;
}

function permutations<T>(items: T[]): T[][] {
  if (items.length <= 1) return [items];
  return items.flatMap((item, i) => permutations([...items.slice(0, i), ...items.slice(i + 1)]).map((rest) => [item, ...rest]));
}

/** The order whose 2-, 3-, … colour prefixes have the largest smallest differences, compared in turn. */
function bestOrder(set: Seen[]): Seen[] {
  let best: Seen[] = set;
  let bestKey: number[] | null = null;
  for (const order of permutations(set)) {
    if (smallestLightnessStep(order.slice(0, GREY_COUNT)) < GREY_STEP) continue;
    const key = [];
    for (const size of PREFIX_ORDER) key.push(smallestDifference(order.slice(0, size)));
    // Ties (orders within a prefix): darker first, so the first components carry the most ink in print.
    for (const colour of order) key.push(-colour.lightness);
    if (bestKey === null || compareKeys(key, bestKey) > 0) {
      best = order;
      bestKey = key;
    }
  }
  return best;
}

function compareKeys(a: number[], b: number[]): number {
  for (let i = 0; i < a.length; i++) if (Math.abs(a[i] - b[i]) > 1e-9) return a[i] - b[i];
  return 0;
}

/** The next colour: among seeded random candidates refined by hill climbing, the one farthest from all before it. */
function nextColour(before: Seen[], random: Random): Seen {
  const value = (c: Seen) => Math.min(...before.map((b) => difference(b, c))) - colourPenalty(c);
  let best = see(randomHex(random));
  for (let start = 0; start < 40; start++) {
    let current = see(randomHex(random));
    for (let step = 0; step < 3000; step++) {
      const candidate = see(nudge(current.hex, random, Math.max(1, Math.round(40 * (1 - step / 3000)))));
      if (value(candidate) >= value(current)) current = candidate;
    }
    if (value(current) > value(best)) best = current;
  }
  return best;
}

/** The lightness (OKLCh L) at which `test` first holds, searched by bisection between `low` and `high`. */
function bisectLightness(chroma: number, hue: number, low: number, high: number, test: (hex: string) => boolean): string {
  // `test` holds at `low` and fails at `high`; keep the boundary between them.
  for (let i = 0; i < 40; i++) {
    const mid = (low + high) / 2;
    if (test(oklchToHex(mid, chroma, hue))) low = mid;
    else high = mid;
  }
  return oklchToHex(low, chroma, hue);
}

function main(): void {
  const random = createRandom(20261202);
  let set: Seen[] = [];
  let setScore = -Infinity;
  for (let start = 0; start < STARTS; start++) {
    const found = anneal(random);
    const s = score(found);
    console.log(`start ${start + 1}: smallest ΔE_OK ${smallestDifference(found).toFixed(4)}, score ${s.toFixed(4)}`);
    if (s > setScore) {
      set = found;
      setScore = s;
    }
  }
  const colours = bestOrder(set);
  while (colours.length < TOTAL) colours.push(nextColour(colours, random));

  console.log("\ncomponent colours (index, hex, CIE L*, OKLCh chroma, contrast with paper):");
  colours.forEach((c, i) => console.log(`${i + 1}  ${c.hex}  L* ${c.lightness.toFixed(1)}  C ${c.chroma.toFixed(3)}  ${c.contrast.toFixed(2)}:1`));
  for (const size of [3, 4, 6, 8, 10]) {
    const prefix = colours.slice(0, size);
    const perView = ["normal", ...DEFICIENCIES].map((name, v) => {
      let least = Infinity;
      for (let i = 0; i < size; i++) for (let j = i + 1; j < size; j++) least = Math.min(least, deltaEOk(prefix[i].views[v], prefix[j].views[v]));
      return `${name} ${least.toFixed(4)}`;
    });
    console.log(`first ${size}: smallest ΔE_OK ${perView.join(", ")}; smallest L* step ${smallestLightnessStep(prefix).toFixed(1)}`);
  }
  console.log(`\nCOMPONENT_COLOURS = ${JSON.stringify(colours.map((c) => c.hex))}`);

  // Interface colours: hue and chroma chosen here; lightness set by the contrast each role needs.
  const alertHue = 18;
  const cautionHue = 68;
  // The accent (headings, buttons, focus) is a muted steel blue, kept quieter than the component colours.
  const accentHue = 220;
  const washOf = (hue: number) => oklchToHex(0.965, 0.025, hue);
  const inkOn = (wash: string, hue: number) => bisectLightness(0.12, hue, 0.05, 0.9, (hex) => contrastRatio(hex, wash) >= 7);
  const ui = {
    alertEdge: oklchToHex(0.55, 0.17, alertHue),
    alertWash: washOf(alertHue),
    alertInk: inkOn(washOf(alertHue), alertHue),
    cautionEdge: oklchToHex(0.7, 0.14, cautionHue),
    cautionWash: washOf(cautionHue),
    cautionInk: inkOn(washOf(cautionHue), cautionHue),
    accent: bisectLightness(0.11, accentHue, 0.05, 0.95, (hex) => contrastRatio(hex, "#ffffff") >= 4.5),
    accentInk: bisectLightness(0.09, accentHue, 0.05, 0.95, (hex) => contrastRatio(hex, "#ffffff") >= 7),
    accentWash: washOf(accentHue),
  };
  console.log(`\naccent hue ${accentHue}°, alert hue ${alertHue}°, caution hue ${cautionHue}°`);
  for (const [name, hex] of Object.entries(ui)) console.log(`${name.padEnd(12)} ${hex}  white ${contrastRatio(hex, "#ffffff").toFixed(2)}:1`);
  console.log(`alert ink on alert wash ${contrastRatio(ui.alertInk, ui.alertWash).toFixed(2)}:1, caution ink on caution wash ${contrastRatio(ui.cautionInk, ui.cautionWash).toFixed(2)}:1`);
}

main();
