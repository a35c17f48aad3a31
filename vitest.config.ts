import path from "node:path";
import { defineConfig } from "vitest/config";

// Kept apart from vite.config.ts so unit and integration tests run without the React Router plugin.
export default defineConfig({
  resolve: { alias: { "~": path.resolve(import.meta.dirname, "app") } },
  test: {
    include: ["app/**/*.test.ts", "tests/**/*.test.ts", "seed/**/*.test.ts"],
    exclude: ["tests/e2e/**", "node_modules/**"],
    environment: "node",
    setupFiles: ["tests/support/setup-env.ts"],
    globalSetup: ["tests/support/global-setup.ts"],
    testTimeout: 30_000,
    hookTimeout: 60_000,
  },
});
