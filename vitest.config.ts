// Vitest runs without the React Router plugin. Three projects: pure unit tests, integration tests on a
// fresh PostgreSQL database per file, and browser tests against the built app in Debian's Chromium.
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
    ],
  },
});
