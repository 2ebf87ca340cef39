import { defineConfig } from "vitest/config";

// `npm test` runs every test that needs only Node. Browser tests (real Chromium)
// live under test/browser and run through `npm run test:browser`.
export default defineConfig({
  test: {
    include: ["test/**/*.test.ts"],
    exclude: ["test/browser/**", "node_modules/**"],
    environment: "node",
    testTimeout: 60000,
  },
});
