import { defineConfig, devices } from "@playwright/test";

const PORT = Number(process.env.E2E_PORT ?? 3210);
export const BASE_URL = `http://127.0.0.1:${PORT}`;

// The real production build against a fresh SQLite file, seeded with the demo shop. Debian's Chromium is
// used because a browser download cannot happen on these machines.
export default defineConfig({
  testDir: "tests/e2e",
  timeout: 60_000,
  expect: { timeout: 10_000 },
  fullyParallel: false,
  workers: 2,
  retries: 0,
  reporter: process.env.CI ? [["list"]] : [["list"]],
  use: {
    baseURL: BASE_URL,
    trace: "retain-on-failure",
    launchOptions: {
      executablePath: process.env.CHROMIUM_PATH ?? "/usr/bin/chromium",
      args: [
        "--no-sandbox",
        "--disable-gpu",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
      ],
    },
  },
  projects: [{ name: "chromium", use: { ...devices["Desktop Chrome"], channel: undefined } }],
  webServer: {
    command: `rm -f data/e2e-${PORT}.db data/e2e-${PORT}.db-* && node server.mjs`,
    url: `${BASE_URL}/healthz`,
    reuseExistingServer: false,
    timeout: 60_000,
    stdout: "pipe",
    env: {
      PORT: String(PORT),
      HOST: "127.0.0.1",
      DATABASE_URL: `file:./data/e2e-${PORT}.db`,
      RAILWISE_BUILD_DIR: process.env.RAILWISE_BUILD_DIR ?? "build",
      SEED_DEMO: "1",
      MAIL_CAPTURE: "1",
      SECURE_COOKIES: "0",
      SIGNIN_MAX_PER_ACCOUNT: "5",
      SIGNIN_MAX_PER_ADDRESS: "100000",
      SESSION_SECRET: "e2e-session-secret-0123456789",
    },
  },
});
