import { defineConfig } from "vitest/config";

// Three suites: unit (pure code, no services), integration (real Postgres and worker),
// browser (Debian Chromium through playwright-core against a running app).
export default defineConfig({
  resolve: { tsconfigPaths: true },
  test: {
    projects: [
      {
        extends: true,
        test: { name: "unit", include: ["tests/ssa/**/*.test.ts", "tests/lib/**/*.test.ts", "tests/cli/**/*.test.ts"], environment: "node", testTimeout: 120_000 },
      },
      {
        extends: true,
        test: { name: "integration", include: ["tests/integration/**/*.test.ts"], environment: "node", testTimeout: 120_000, hookTimeout: 120_000, fileParallelism: false },
      },
      {
        // Tests that need the database to themselves (they compare checksums of every table): run
        // after every other suite (a higher groupOrder), one file at a time.
        extends: true,
        test: { name: "exclusive", include: ["tests/exclusive/**/*.test.ts"], environment: "node", testTimeout: 300_000, hookTimeout: 120_000, fileParallelism: false, sequence: { groupOrder: 1 } },
      },
      {
        extends: true,
        test: { name: "browser", include: ["tests/browser/**/*.test.ts"], environment: "node", testTimeout: 180_000, hookTimeout: 180_000, fileParallelism: false },
      },
    ],
  },
});
