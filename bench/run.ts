import { runSpeedBench } from "./speed";
import { runAccuracyBench } from "./accuracy";
import { runScanAccuracyBench } from "./scanAccuracy";
import { runFunctionsBench } from "./functionsBench";
import { runBaselineBench } from "./baselineBench";
import { runD100Bench, runFewerRowsBench, runFitSeedsBench, runLargeBench, runScanSixBench, runSmallBench } from "./targetsBench";

/**
 * `npm run bench`: prints speed and accuracy figures (never asserted; see the unit tests for
 * checks). `npm run bench -- speed scan` runs only the named sections.
 */
const SECTIONS: Record<string, (print: (line: string) => void) => unknown> = {
  speed: runSpeedBench,
  accuracy: runAccuracyBench,
  baseline: runBaselineBench,
  scan: runScanAccuracyBench,
  functions: runFunctionsBench,
  small: runSmallBench,
  fewer: runFewerRowsBench,
  d100: runD100Bench,
  fitseeds: runFitSeedsBench,
  large: runLargeBench,
  scan6: runScanSixBench,
};

async function main(): Promise<void> {
  const print = (line: string): void => console.log(line);
  const asked = process.argv.slice(2);
  const unknown = asked.filter((name) => !(name in SECTIONS));
  if (unknown.length > 0) {
    console.error(`Unknown bench section ${unknown.join(", ")}; the sections are ${Object.keys(SECTIONS).join(", ")}.`);
    process.exitCode = 2;
    return;
  }
  const names = asked.length > 0 ? asked : Object.keys(SECTIONS);
  print(`Skein bench, ${new Date().toISOString()}, Node ${process.version}; sections: ${names.join(", ")}`);
  for (const name of names) {
    const started = performance.now();
    print("");
    await SECTIONS[name](print);
    print(`(${name}: ${((performance.now() - started) / 1000).toFixed(1)} s)`);
  }
}

main().catch((error) => {
  console.error(error);
  process.exitCode = 1;
});
