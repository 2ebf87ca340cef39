import { describe, expect, it } from "vitest";
import { join } from "node:path";
import { generateCustomFunctionsMetadata } from "custom-functions-metadata";

// functions.json is generated from the JSDoc in src/functions/functions.ts by the same
// generator the build uses (custom-functions-metadata, run by custom-functions-metadata-plugin);
// this checks what Excel will read, without a build.
interface ParameterMetadata {
  name: string;
  description?: string;
  dimensionality?: string;
  optional?: boolean;
  type: string;
}
interface FunctionMetadata {
  id: string;
  name: string;
  description: string;
  helpUrl?: string;
  parameters: ParameterMetadata[];
  result: { dimensionality?: string };
  options?: { cancelable?: boolean; requiresAddress?: boolean; stream?: boolean; volatile?: boolean };
}

/** The functions and their arguments as the README lists them; [name] is optional. */
const EXPECTED: Record<string, string[]> = {
  FIT: ["y", "x", "[k]", "[settings]"],
  LABELS: ["y", "x", "[k]", "[settings]"],
  MEMBERSHIP: ["y", "x", "[k]", "[settings]"],
  SCAN: ["y", "x", "[kmax]", "[settings]"],
  CHECK: ["y", "x", "[k]", "[settings]"],
  PREDICT: ["y", "x", "new_rows", "[k]", "[settings]"],
};
/** Range arguments reach the function as 2-D arrays; k and kmax are single numbers. */
const RANGES = new Set(["y", "x", "new_rows", "settings"]);

describe("generated worksheet function metadata", async () => {
  const result = await generateCustomFunctionsMetadata([join(__dirname, "..", "src", "functions", "functions.ts")], false);
  const metadata = JSON.parse(result.metadataJson) as { functions: FunctionMetadata[] };

  it("generates without errors", () => {
    expect(result.errors).toEqual([]);
  });

  it("lists exactly the six SKEIN functions", () => {
    expect(metadata.functions.map((f) => f.id).sort()).toEqual(Object.keys(EXPECTED).sort());
    for (const f of metadata.functions) expect(f.name).toBe(f.id);
  });

  for (const [id, argumentsInOrder] of Object.entries(EXPECTED)) {
    describe(id, () => {
      const f = () => metadata.functions.find((candidate) => candidate.id === id)!;

      it("takes its arguments in the documented order, ranges as matrices, optional ones flagged", () => {
        const parameters = f().parameters;
        expect(parameters.map((p) => (p.optional ? `[${p.name}]` : p.name))).toEqual(argumentsInOrder);
        for (const p of parameters) {
          if (RANGES.has(p.name)) expect([p.name, p.dimensionality]).toEqual([p.name, "matrix"]);
          else expect([p.name, p.type, p.dimensionality]).toEqual([p.name, "number", undefined]);
          expect(p.description?.length ?? 0).toBeGreaterThan(15);
        }
      });

      it("spills a matrix, is cancelable and receives its cell address", () => {
        expect(f().result.dimensionality).toBe("matrix");
        expect(f().options).toEqual({ cancelable: true, requiresAddress: true });
      });

      it("has a description and a help link", () => {
        expect(f().description.length).toBeGreaterThan(60);
        expect(f().helpUrl).toMatch(/^https:\/\//);
      });
    });
  }

  it("describes settings with an example of its text form", () => {
    const settings = metadata.functions[0].parameters.find((p) => p.name === "settings")!;
    expect(settings.description).toContain("seed=7; intercept=no; model=joint");
  });
});
