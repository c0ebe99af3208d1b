// Vitest runs without the React Router plugin. Four projects: pure unit tests, integration tests on a
// fresh PostgreSQL database per file, browser tests against the built app in Debian's Chromium, and system
// tests (whole stacks with their own fakes, faults such as a PostgreSQL restart). scripts/test.ts runs
// "system" alone after the others, because it restarts the PostgreSQL cluster they share.
import { defineConfig } from "vitest/config";

export default defineConfig({
  resolve: { tsconfigPaths: true },
  test: {
    testTimeout: 30_000,
    hookTimeout: 120_000,
    setupFiles: ["tests/setup/console-guard.ts"],
    projects: [
      {
        extends: true,
        test: { name: "unit", include: ["tests/diffraction/**/*.test.ts", "tests/unit/**/*.test.ts"] },
      },
      {
        extends: true,
        test: {
          name: "integration",
          include: ["tests/integration/**/*.test.ts"],
          setupFiles: ["tests/setup/console-guard.ts", "tests/setup/db-setup.ts"],
        },
      },
      {
        extends: true,
        test: {
          name: "browser",
          include: ["tests/browser/**/*.test.ts"],
          globalSetup: ["tests/setup/browser-server.ts"],
          fileParallelism: false,
          testTimeout: 60_000,
        },
      },
      {
        extends: true,
        test: {
          name: "system",
          include: ["tests/system/**/*.test.ts"],
          fileParallelism: false,
          testTimeout: 120_000,
          hookTimeout: 180_000,
        },
      },
    ],
  },
});
