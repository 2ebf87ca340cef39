/**
 * The three invented scenarios behind the sample workbooks. Every number here
 * is made up for the demo: no real fleet, shop chain or laboratory is
 * described. Each scenario states its hidden structure (true components) so
 * the demo and the tests can compare a fit with it.
 */
import { createRandom, shuffleInPlace, type Random } from "../src/engine/random";

/** One hidden group as the generator used it. */
export interface TrueComponent {
  name: string;
  /** Share of rows drawn from this component (the realised share: counts / rows). */
  weight: number;
  /** SD of the Gaussian noise added to y (0: none). */
  noiseSD: number;
  intercept: number;
  /** One slope per predictor, in the predictors' order. */
  coefficients: number[];
}

export interface Scenario {
  /** File stem: sample-workbooks/<name>.xlsx and .csv. */
  name: string;
  title: string;
  /** What the rows are, in a sentence or two, for the about sheet. */
  story: string[];
  seed: number;
  /** Header of the response column. */
  response: string;
  /** Headers of the predictor columns, in order. */
  predictors: string[];
  /** Columns before the response that carry labels only (row ids, shop names). */
  idColumns: string[];
  /** Model the scenario is meant to be fitted with. */
  model: "plain" | "joint";
  /** Largest K the demo and the SKEIN.SCAN formula try. */
  kMax: number;
  components: TrueComponent[];
  /** Header row then data rows: id columns, response, predictors. */
  rows: (string | number)[][];
  /** 0-based true component of each data row. */
  trueComponents: number[];
  /** A few new predictor rows for the SKEIN.PREDICT example. */
  newRows: number[][];
}

/** Rounds to a number of decimals, so generated sheets look like recorded data. */
function round(value: number, decimals: number): number {
  const scale = 10 ** decimals;
  return Math.round(value * scale) / scale;
}

/** Component of each row, with exact counts, in random order. */
function assignComponents(counts: number[], random: Random): number[] {
  const labels: number[] = [];
  counts.forEach((count, k) => {
    for (let i = 0; i < count; i++) labels.push(k);
  });
  return shuffleInPlace(labels, random);
}

function linear(component: TrueComponent, x: number[]): number {
  let value = component.intercept;
  for (let j = 0; j < x.length; j++) value += component.coefficients[j] * x[j];
  return value;
}

/**
 * Delivery fleet: litres of fuel per trip against distance and payload, from
 * three vehicle classes that the trip log does not record. Every class drives
 * the same kinds of trips (same distance and payload ranges), so only the
 * fuel line tells them apart: a plain mixture.
 */
export function deliveryFleet(): Scenario {
  const seed = 20240611;
  const random = createRandom(seed);
  const counts = [300, 180, 120];
  const n = counts.reduce((a, b) => a + b, 0);
  const components: TrueComponent[] = [
    { name: "Small vans", weight: counts[0] / n, noiseSD: 1.5, intercept: 0.8, coefficients: [0.075, 0.9] },
    { name: "Box trucks", weight: counts[1] / n, noiseSD: 2.5, intercept: 2.0, coefficients: [0.16, 1.6] },
    { name: "Rigid lorries", weight: counts[2] / n, noiseSD: 3.5, intercept: 4.0, coefficients: [0.3, 2.2] },
  ];
  const labels = assignComponents(counts, random);
  const rows: (string | number)[][] = [["Trip", "Fuel used (L)", "Distance (km)", "Payload (t)"]];
  for (let i = 0; i < n; i++) {
    const distance = round(15 + 205 * random.next(), 1);
    const payload = round(0.2 + 3.3 * random.next(), 2);
    const component = components[labels[i]];
    const fuel = round(linear(component, [distance, payload]) + component.noiseSD * random.normal(), 2);
    rows.push([`T${String(i + 1).padStart(4, "0")}`, fuel, distance, payload]);
  }
  return {
    name: "delivery-fleet",
    title: "Delivery fleet: fuel used per trip",
    story: [
      "An invented courier firm logs every trip: fuel used (litres), distance driven (km) and payload carried (tonnes).",
      "The log does not say which kind of vehicle made the trip. Three vehicle classes share the work, each with its own fuel line.",
      "All classes drive the same mix of distances and payloads, so a plain mixture (y given x per component) is the model to use.",
      "Fuel readings carry noise (pump rounding, traffic, weather); the noise SD differs by class.",
    ],
    seed,
    response: "Fuel used (L)",
    predictors: ["Distance (km)", "Payload (t)"],
    idColumns: ["Trip"],
    model: "plain",
    kMax: 5,
    components,
    rows,
    trueComponents: labels,
    newRows: [
      [40, 1.0],
      [120, 2.0],
      [200, 3.0],
    ],
  };
}

/**
 * Chain of shops: weekly units of one product against its shelf price and a
 * promotion flag. Shops belong to one of two hidden customer segments with
 * different price sensitivity; a shop keeps its segment every week.
 */
export function shopChain(): Scenario {
  const seed = 7311;
  const random = createRandom(seed);
  const shops = 48;
  const weeks = 10;
  const shopCounts = [28, 20];
  const n = shops * weeks;
  const components: TrueComponent[] = [
    { name: "Bargain-hunting neighbourhoods", weight: shopCounts[0] / shops, noiseSD: 14, intercept: 400, coefficients: [-40, 55] },
    { name: "Loyal neighbourhoods", weight: shopCounts[1] / shops, noiseSD: 12, intercept: 250, coefficients: [-8, 20] },
  ];
  const shopSegment = assignComponents(shopCounts, random);
  const rows: (string | number)[][] = [["Shop", "Week", "Units sold", "Price", "Promotion"]];
  const labels: number[] = [];
  for (let shop = 0; shop < shops; shop++) {
    const component = components[shopSegment[shop]];
    for (let week = 1; week <= weeks; week++) {
      const price = round(3.49 + 4.5 * random.next(), 2);
      const promotion = random.next() < 0.25 ? 1 : 0;
      // Units are counted in whole items; the rounding adds about 0.29 units of noise SD (1/sqrt(12)).
      const units = Math.max(0, Math.round(linear(component, [price, promotion]) + component.noiseSD * random.normal()));
      rows.push([`Shop ${String(shop + 1).padStart(2, "0")}`, week, units, price, promotion]);
      labels.push(shopSegment[shop]);
    }
  }
  return {
    name: "shop-chain",
    title: "Chain of shops: weekly units sold",
    story: [
      "An invented chain of 48 shops records, for one product over 10 weeks, the units sold, the shelf price (in currency units) and whether the product was on promotion (1) or not (0).",
      "Each shop serves one of two hidden customer segments: bargain hunters react strongly to price and promotions, loyal customers hardly at all.",
      "The sheet does not say which shop serves which segment. A plain mixture with two components recovers the two price lines.",
      "Units sold are whole numbers with noise; near the price where the two lines cross, single weeks cannot be told apart.",
    ],
    seed,
    response: "Units sold",
    predictors: ["Price", "Promotion"],
    idColumns: ["Shop", "Week"],
    model: "plain",
    kMax: 5,
    components,
    rows,
    trueComponents: labels,
    newRows: [
      [3.99, 0],
      [5.49, 1],
      [7.49, 0],
    ],
  };
}

/** Where one sensor batch's settings lie: mean and SD per setting. */
interface SettingSpread {
  mean: number[];
  sd: number[];
}

/**
 * Lab calibration: an instrument reading against eight settings, from four
 * sensor batches. Each batch was run over its own range of settings and has
 * its own exact calibration line; readings carry no noise. Because the batches
 * sit in different parts of the settings space, the joint model (which also
 * models where each component's x lie) helps.
 */
export function labCalibration(): Scenario {
  const seed = 4242;
  const random = createRandom(seed);
  const counts = [280, 200, 160, 120];
  const n = counts.reduce((a, b) => a + b, 0);
  const predictors = [
    "Temperature (C)",
    "Humidity (%)",
    "Pressure (kPa)",
    "Flow (mL/min)",
    "Voltage (V)",
    "Gain",
    "Exposure (ms)",
    "Wavelength (nm)",
  ];
  const components: TrueComponent[] = [
    { name: "Batch A", weight: counts[0] / n, noiseSD: 0, intercept: 12, coefficients: [0.8, -0.15, 0.05, 0.3, 2.5, 1.2, 0.02, -0.01] },
    { name: "Batch B", weight: counts[1] / n, noiseSD: 0, intercept: -4, coefficients: [1.1, 0.1, -0.02, 0.12, 3.1, 0.6, 0.035, 0.004] },
    { name: "Batch C", weight: counts[2] / n, noiseSD: 0, intercept: 30, coefficients: [0.45, -0.05, 0.09, 0.25, 1.4, 2.0, -0.01, -0.02] },
    { name: "Batch D", weight: counts[3] / n, noiseSD: 0, intercept: 5, coefficients: [0.95, 0.2, 0.01, -0.1, 2.2, 0.9, 0.05, 0.012] },
  ];
  const spreads: SettingSpread[] = [
    { mean: [20, 40, 100, 10, 5, 2, 50, 450], sd: [2, 5, 2, 2, 0.5, 0.4, 10, 20] },
    { mean: [26, 55, 98, 14, 6, 3, 80, 520], sd: [2, 5, 2, 2, 0.5, 0.4, 10, 20] },
    { mean: [32, 35, 103, 8, 4.5, 2.5, 65, 600], sd: [2.5, 6, 2.5, 2, 0.6, 0.5, 12, 25] },
    { mean: [23, 65, 101, 18, 5.5, 1.6, 40, 480], sd: [1.5, 4, 1.5, 2.5, 0.4, 0.3, 8, 15] },
  ];
  const decimals = [1, 1, 2, 2, 3, 2, 1, 1];
  const labels = assignComponents(counts, random);
  const rows: (string | number)[][] = [["Run", "Reading", ...predictors]];
  for (let i = 0; i < n; i++) {
    const spread = spreads[labels[i]];
    // Settings are rounded as the instrument records them; the reading is
    // computed from the rounded settings, so it is exactly linear in what the sheet holds.
    const settings = spread.mean.map((mean, j) => round(mean + spread.sd[j] * random.normal(), decimals[j]));
    // Twelve significant digits hold the exact decimal reading and drop binary rounding noise
    // (55.124700000000004 is written 55.1247).
    rows.push([`R${String(i + 1).padStart(4, "0")}`, Number(linear(components[labels[i]], settings).toPrecision(12)), ...settings]);
  }
  return {
    name: "lab-calibration",
    title: "Lab calibration: instrument readings",
    story: [
      "An invented laboratory calibrates an instrument: each run records the reading and the eight settings it was taken at.",
      "Sensors came from four batches; each batch has its own exact calibration line and was tested over its own range of settings.",
      "The run log does not record the batch. Readings carry no noise, so a good fit recovers the lines to rounding level.",
      "Because the batches sit in different regions of the settings, the joint model (model=joint) helps: it also models where each component's settings lie, and can assign new runs from their settings alone.",
    ],
    seed,
    response: "Reading",
    predictors,
    idColumns: ["Run"],
    model: "joint",
    kMax: 6,
    components,
    rows,
    trueComponents: labels,
    newRows: [spreads[0].mean, spreads[1].mean, spreads[2].mean, spreads[3].mean],
  };
}

/** All scenarios, in the order the demo runs them. */
export function allScenarios(): Scenario[] {
  return [deliveryFleet(), shopChain(), labCalibration()];
}
