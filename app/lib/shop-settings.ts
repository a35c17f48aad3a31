import { z } from "zod";

// The owner's money and policy settings: tax rate, currency, warranty, how long personal data and unclaimed
// devices are kept. Shared by the settings action and the same form's validation in the browser.

/** Currencies a shop may bill in, by ISO 4217 code: a short list; money.ts handles any code, so more can join. */
export const CURRENCIES = [
  ["USD", "US dollar"],
  ["CAD", "Canadian dollar"],
  ["EUR", "Euro"],
  ["GBP", "Pound sterling"],
  ["AUD", "Australian dollar"],
  ["NZD", "New Zealand dollar"],
  ["CHF", "Swiss franc"],
  ["SEK", "Swedish krona"],
  ["NOK", "Norwegian krone"],
  ["DKK", "Danish krone"],
  ["PLN", "Polish złoty"],
  ["JPY", "Japanese yen"],
] as const;
export type Currency = (typeof CURRENCIES)[number][0];
const CURRENCY_CODES = CURRENCIES.map(([code]) => code) as [Currency, ...Currency[]];

// Bounds a real shop needs and no more. Sales tax and VAT rates stay under 30 % (from memory: the highest
// standard VAT rates are around 27 %). Warranties on repairs run from none to two years. Personal data is kept
// at least 30 days after a job closes (time to settle a dispute) and at most ten years. Unclaimed devices are
// kept at least two weeks and at most a year.
export const LIMITS = {
  taxBp: { min: 0, max: 3000 },
  warrantyDays: { min: 0, max: 730 },
  retentionDays: { min: 30, max: 3650 },
  unclaimedDays: { min: 14, max: 365 },
} as const;

export type PercentParse = { ok: true; bp: number } | { ok: false; message: string };

/** "8.25" → 825 basis points, exactly (string digits, no floating point); at most two decimals. */
export function percentToBp(text: string): PercentParse {
  const clean = text.trim().replace(/\s*%$/, "").replace(",", ".");
  if (clean === "") return { ok: false, message: "Enter the tax rate, e.g. 8.25 (0 if you charge none)." };
  const m = /^(\d{1,3})(?:\.(\d*))?$/.exec(clean);
  if (!m) return { ok: false, message: `"${text.trim()}" is not a percentage (use digits, e.g. 8.25).` };
  const frac = m[2] ?? "";
  if (frac.length > 2) return { ok: false, message: "Use at most two decimals (8.25 %, not 8.255 %)." };
  const bp = Number(m[1]) * 100 + Number(frac.padEnd(2, "0") || "0");
  if (bp < LIMITS.taxBp.min || bp > LIMITS.taxBp.max) {
    return { ok: false, message: `Enter a rate from 0 to ${LIMITS.taxBp.max / 100} %.` };
  }
  return { ok: true, bp };
}

/** 825 → "8.25", 800 → "8", 850 → "8.5": the rate as the owner types it. */
export function bpToPercent(bp: number): string {
  const whole = Math.floor(bp / 100);
  const frac = String(bp % 100)
    .padStart(2, "0")
    .replace(/0+$/, "");
  return frac ? `${whole}.${frac}` : String(whole);
}

const days = (what: string, limits: { min: number; max: number }) =>
  z
    .number({ error: `Enter the ${what} in days.` })
    .int({ error: "Use whole days." })
    .min(limits.min, { error: `Use at least ${limits.min} days.` })
    .max(limits.max, { error: `Use at most ${limits.max} days.` });

export const ShopTermsSchema = z
  .object({
    intent: z.literal("shop-terms"),
    taxPercent: z
      .string({ error: "Enter the tax rate, e.g. 8.25 (0 if you charge none)." })
      .transform((text, ctx) => {
        const parsed = percentToBp(text);
        if (parsed.ok) return parsed.bp;
        ctx.addIssue({ code: "custom", message: parsed.message });
        return z.NEVER;
      }),
    currency: z.enum(CURRENCY_CODES, { error: "Pick a currency from the list." }),
    warrantyDays: days("warranty period", LIMITS.warrantyDays),
    retentionDays: days("retention period", LIMITS.retentionDays),
    unclaimedDays: days("time unclaimed devices are kept", LIMITS.unclaimedDays),
  })
  // A warranty comeback reopens the customer's record; erasing it while the warranty runs would lose them.
  .refine((v) => v.retentionDays >= v.warrantyDays, {
    path: ["retentionDays"],
    error: "Keep personal data at least as long as the warranty runs, so a comeback finds the customer.",
  });
