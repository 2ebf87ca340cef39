import { describe, expect, it } from "vitest";
import { alignColumns, formatColumn, formatGap, formatNumber, formatPercent, formatPlusMinus, formatWithError } from "../src/report/formatNumber";

// Expected strings follow the rules stated in src/report/formatNumber.ts (derived by hand here).
describe("one number style", () => {
  it("shows four significant digits, keeps trailing zeros, and never rounds away whole digits", () => {
    expect(formatNumber(7.35591)).toBe("7.356");
    expect(formatNumber(0.958136)).toBe("0.9581");
    expect(formatNumber(0.61)).toBe("0.6100");
    expect(formatNumber(-2070.8)).toBe("-2071");
    expect(formatNumber(37225.2)).toBe("37225");
    expect(formatNumber(9.99996)).toBe("10.00");
    expect(formatNumber(0)).toBe("0");
    expect(formatNumber(7.59417e-10)).toBe("7.594e-10");
    expect(formatNumber(NaN)).toBe("not available");
  });

  it("rounds an estimate where its standard error says: two significant digits of the error", () => {
    // NIST StRD Longley b3 = -2.02022980381683, SE 0.488399681651699.
    expect(formatWithError(-2.02022980381683, 0.488399681651699)).toEqual({ value: "-2.02", error: "0.49" });
    expect(formatWithError(0.0738, 0.00152)).toEqual({ value: "0.0738", error: "0.0015" });
    // Whole digits are kept: SE 455.478 stays 455, not 460.
    expect(formatWithError(1829.15146461355, 455.478499142212)).toEqual({ value: "1829", error: "455" });
    // An exact fit: SE 0, every digit known (binary rounding noise dropped).
    expect(formatWithError(12, 0)).toEqual({ value: "12", error: "0" });
    expect(formatWithError(0.004000000000000036, 0)).toEqual({ value: "0.004", error: "0" });
    expect(formatWithError(3.5, NaN)).toEqual({ value: "3.500", error: "not available" });
    expect(formatPlusMinus(59.6113, 2.94)).toBe("59.6 ± 2.9");
  });

  it("puts an estimate and a standard error beyond fixed notation in exponent form, never a row of zeros", () => {
    // Invented values of a fit on y near 1e-305. Before, both printed as 0.000000000000.
    expect(formatWithError(3.8412e-306, 2.2e-307)).toEqual({ value: "3.84e-306", error: "2.2e-307" });
    expect(formatWithError(-1.00812e-305, 1.07e-308)).toEqual({ value: "-1.0081e-305", error: "1.1e-308" });
    // An estimate smaller than its error keeps the error's place: no digits below it.
    expect(formatWithError(3e-310, 4.1e-308)).toEqual({ value: "3e-310", error: "4.1e-308" });
    // Large: the estimate to the place of the error's second digit, 1e195.
    expect(formatWithError(2.0128e200, 6.3e196)).toEqual({ value: "2.01280e+200", error: "6.3e+196" });
    // Errors down to about 1e-11 stay in fixed notation.
    expect(formatWithError(1.078, 0.00000058)).toEqual({ value: "1.07800000", error: "0.00000058" });
  });

  it("shows shares as percentages and gaps of noiseless components as no overlap", () => {
    expect(formatPercent(0.143)).toBe("14.3%");
    expect(formatPercent(1)).toBe("100.0%");
    expect(formatGap(3.73994)).toBe("3.740");
    expect(formatGap(Infinity)).toBe("no overlap (noise about 0)");
    expect(formatGap(2e9)).toBe("no overlap (noise about 0)");
  });

  it("puts a column at one number of decimals so decimal points line up", () => {
    expect(formatColumn([-18433.49, 84.2074])).toEqual(["-18433.49", "84.21"]);
    expect(formatColumn([4528.25, 4235.13])).toEqual(["4528", "4235"]);
    const lines = alignColumns([["K", "BIC"], ["1", "4528"], ["10", "35"]]);
    // K column 2 wide (left), BIC 4 wide (right), three spaces between.
    expect(lines).toEqual(["K     BIC", "1    4528", "10     35"]);
  });
});
