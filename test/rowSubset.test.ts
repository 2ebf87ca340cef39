import { describe, expect, it } from "vitest";
import { gatherRows, rowsWithLabel, selectRows } from "../src/engine/rowSubset";

describe("row subsets", () => {
  // Invented 4 x 2 matrix whose entries name their row and column (10·row + column).
  const matrix = Float64Array.from([0, 1, 10, 11, 20, 21, 30, 31]);
  const y = Float64Array.from([100, 101, 102, 103]);

  it("copies the listed rows in the listed order, repeats included, and stops at count", () => {
    const { matrix: rows, y: responses } = gatherRows(matrix, 2, y, [3, 1, 3, 0], 3);
    expect(Array.from(rows)).toEqual([30, 31, 10, 11, 30, 31]);
    expect(Array.from(responses)).toEqual([103, 101, 103]);
  });

  it("selectRows returns data of its own and rowsWithLabel lists rows in order", () => {
    const data = selectRows({ x: matrix, y, n: 4, p: 2 }, rowsWithLabel([1, 0, 1, 1], 1));
    expect(data.n).toBe(3);
    expect(Array.from(data.x)).toEqual([0, 1, 20, 21, 30, 31]);
    expect(Array.from(data.y)).toEqual([100, 102, 103]);
    expect(rowsWithLabel([1, 0, 1], 2)).toHaveLength(0);
  });
});
