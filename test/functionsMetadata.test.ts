import { describe, expect, it } from "vitest";
import { join } from "node:path";
import { generateCustomFunctionsMetadata } from "custom-functions-metadata";

// functions.json is generated from the JSDoc in src/functions/functions.ts by the same
// generator the build uses (custom-functions-metadata, run by custom-functions-metadata-plugin);
// this checks what Excel will read, without a build.
describe("generated worksheet function metadata", async () => {
  const result = await generateCustomFunctionsMetadata([join(__dirname, "..", "src", "functions", "functions.ts")], false);
  const metadata = JSON.parse(result.metadataJson) as { functions: { id: string; name: string; description: string; parameters: { name: string; dimensionality?: string; optional?: boolean; type: string }[]; result: { dimensionality?: string } }[] };

  it("generates without errors", () => {
    expect(result.errors).toEqual([]);
  });

  it("lists FIT with matrix ranges for y and x, an optional k and a spilled result", () => {
    const fit = metadata.functions.find((f) => f.id === "FIT");
    expect(fit).toBeDefined();
    expect(fit!.description.length).toBeGreaterThan(20);
    const [y, x, k] = fit!.parameters;
    expect([y.name, y.dimensionality, y.optional ?? false]).toEqual(["y", "matrix", false]);
    expect([x.name, x.dimensionality, x.optional ?? false]).toEqual(["x", "matrix", false]);
    expect([k.name, k.type, k.optional]).toEqual(["k", "number", true]);
    expect(fit!.result.dimensionality).toBe("matrix");
  });
});
