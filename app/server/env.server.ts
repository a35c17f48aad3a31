import { z } from "zod";

// Read once at start-up; a bad value stops the server with a message naming the variable.
const EnvSchema = z.object({
  NODE_ENV: z.enum(["development", "production", "test"]).default("development"),
  DATABASE_URL: z.string().min(1).default("file:./data/railwise.db"),
  DATABASE_AUTH_TOKEN: z.string().optional(),
  DATABASE_TIMEOUT_MS: z.coerce.number().int().positive().default(5000),
  // SQLite's commit durability for a file database (docs/decisions/008-sqlite-commit-durability.md).
  DATABASE_SYNCHRONOUS: z.enum(["normal", "full"]).default("normal"),
  SESSION_SECRET: z.string().min(16).default("dev-only-session-secret-change-me"),
  MAIL_CAPTURE: z.enum(["0", "1"]).optional(),
  SMTP_URL: z.string().optional(),
  MAIL_FROM: z.string().default("Railwise <no-reply@railwise.local>"),
  APP_URL: z.string().url().optional(),
  SIGNIN_MAX_PER_ACCOUNT: z.coerce.number().int().positive().default(10),
  SIGNIN_MAX_PER_ADDRESS: z.coerce.number().int().positive().default(100),
  SIGNIN_WINDOW_MINUTES: z.coerce.number().positive().default(15),
  SEED_DEMO: z.enum(["0", "1"]).optional(),
  SECURE_COOKIES: z.enum(["0", "1"]).optional(),
});

export type Env = z.infer<typeof EnvSchema>;

function readEnv(): Env {
  const parsed = EnvSchema.safeParse(process.env);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join(".")}: ${i.message}`);
    throw new Error(`Railwise cannot start, the environment is not valid:\n${lines.join("\n")}`);
  }
  const env = parsed.data;
  if (env.NODE_ENV === "production" && env.SESSION_SECRET.startsWith("dev-only") && env.SEED_DEMO !== "1") {
    console.warn("SESSION_SECRET is the development default; set your own in production.");
  }
  // Captured mail is readable at /dev/outbox by anyone who can reach the server, reset links included, so in
  // production it is only ever on when asked for by name; otherwise real mail needs an SMTP server.
  if (env.NODE_ENV === "production" && env.MAIL_CAPTURE !== "1" && !env.SMTP_URL) {
    throw new Error(
      "Railwise cannot start: set SMTP_URL for outgoing e-mail in production (or MAIL_CAPTURE=1 for a local demo).",
    );
  }
  // Reset, invitation and quote links are e-mailed: in production their host comes from APP_URL, never from
  // the request, whose Host header the sender of a forged request chooses. Captured mail goes nowhere, so a
  // local demo with MAIL_CAPTURE=1 may do without it.
  if (env.NODE_ENV === "production" && env.MAIL_CAPTURE !== "1" && !env.APP_URL) {
    throw new Error(
      "Railwise cannot start: set APP_URL to the address members use (e.g. https://bench.example.com); links in e-mail are built from it.",
    );
  }
  return env;
}

export const env = readEnv();

/** Capture is the default in development and tests; in production only with MAIL_CAPTURE=1 (local demo). */
export const mailCaptureOn = () =>
  env.MAIL_CAPTURE ? env.MAIL_CAPTURE === "1" : env.NODE_ENV !== "production";

/** Secure cookies in production unless SECURE_COOKIES=0 (a plain-http local demo). */
export const secureCookies = () =>
  env.SECURE_COOKIES ? env.SECURE_COOKIES === "1" : env.NODE_ENV === "production";
