import { existsSync } from "node:fs";
import { join } from "node:path";
import { runSpeedBench } from "./speed";

/** `npm run bench`: the speed bench, then the accuracy bench when it is present. */
async function main(): Promise<void> {
  const print = (line: string): void => console.log(line);
  runSpeedBench(print);
  if (existsSync(join(__dirname, "accuracy.ts"))) {
    const accuracy = await import("./accuracy");
    print("");
    accuracy.runAccuracyBench(print);
  }
}

main().catch((error) => {
  console.error(error);
  process.exitCode = 1;
});
