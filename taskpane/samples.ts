/**
 * The bundled samples (sample-workbooks/*.csv, copied to dist/samples/ by the
 * build) and the ranges each is meant to be fitted with. Only names, titles and
 * ranges are taken from truth.json; the true components it also records are
 * never shown by the pane.
 */
import truth from "../sample-workbooks/truth.json";
import { formatAddress, parseAddress } from "./a1";

export interface Sample {
  name: string;
  title: string;
  csv: string;
  /** Ranges with the header row included, so the pane finds the column names. */
  yAddress: string;
  xAddress: string;
}

interface Scenario {
  name: string;
  title: string;
  csv: string;
  yRange: string;
  xRange: string;
}

/** Moves a data range's top up to row 1 (the header row of the sample sheets). */
function withHeader(address: string): string {
  const block = parseAddress(address);
  return block ? formatAddress({ ...block, top: 0 }) : address;
}

export const SAMPLES: Sample[] = (truth as { scenarios: Scenario[] }).scenarios.map((s) => ({
  name: s.name,
  title: s.title,
  csv: s.csv,
  yAddress: withHeader(s.yRange),
  xAddress: withHeader(s.xRange),
}));
