// Money as integer minor units (cents for USD) so sums never drift; prices are tax-exclusive and tax is
// computed once on the subtotal, not per line, at the shop's rate in basis points (825 bp = 8.25 %).

/** Digits after the decimal point for a currency (ISO 4217 minor unit), read from the platform's data. */
export function minorDigits(currency: string): number {
  return (
    new Intl.NumberFormat("en", { style: "currency", currency }).resolvedOptions().maximumFractionDigits ?? 2
  );
}

export type MoneyParse = { ok: true; minor: number } | { ok: false; message: string };

/** "12", "12.5", "12.50", "1,234.50" → minor units. Refuses more decimals than the currency has. */
export function parseMoney(text: string, currency = "USD"): MoneyParse {
  const digits = minorDigits(currency);
  const clean = text.trim().replace(/,/g, "");
  if (clean === "") return { ok: false, message: "Enter an amount." };
  const m = /^(\d+)(?:\.(\d*))?$/.exec(clean);
  if (!m) return { ok: false, message: `"${text}" is not an amount (use digits, e.g. 12.50).` };
  const frac = m[2] ?? "";
  if (frac.length > digits) {
    return { ok: false, message: `${currency} amounts have at most ${digits} decimal places.` };
  }
  const minor = Number(m[1]) * 10 ** digits + Number(frac.padEnd(digits, "0") || "0");
  if (!Number.isSafeInteger(minor) || minor > 100_000_000_00) {
    return { ok: false, message: "That amount is too large." };
  }
  return { ok: true, minor };
}

/** Minor units → "12.50" (no symbol), for form fields. */
export function minorToInput(minor: number, currency = "USD"): string {
  const digits = minorDigits(currency);
  if (digits === 0) return String(minor);
  const sign = minor < 0 ? "-" : "";
  const abs = Math.abs(minor);
  const unit = 10 ** digits;
  return `${sign}${Math.floor(abs / unit)}.${String(abs % unit).padStart(digits, "0")}`;
}

/** Minor units → "$12.50" for display. */
export function formatMoney(minor: number, currency = "USD", locale = "en-US"): string {
  const digits = minorDigits(currency);
  return new Intl.NumberFormat(locale, { style: "currency", currency }).format(minor / 10 ** digits);
}

/**
 * Tax on a tax-exclusive subtotal at `rateBp` basis points, rounded half-up to whole minor units.
 * BigInt keeps subtotal × rate exact beyond 2^53.
 */
export function taxOn(subtotalMinor: number, rateBp: number): number {
  if (!Number.isInteger(subtotalMinor) || !Number.isInteger(rateBp) || rateBp < 0) {
    throw new RangeError("taxOn needs integer minor units and a non-negative integer rate in basis points");
  }
  const negative = subtotalMinor < 0;
  const product = BigInt(Math.abs(subtotalMinor)) * BigInt(rateBp);
  // Half-up: add half of the divisor before the integer division (10 000 bp = 100 %).
  const rounded = (product + 5000n) / 10000n;
  const value = Number(rounded);
  return negative ? -value : value;
}

export type Line = { quantity: number; unitMinor: number };

export function lineTotal(line: Line): number {
  if (!Number.isInteger(line.quantity) || line.quantity < 1)
    throw new RangeError("quantity must be a whole number ≥ 1");
  if (!Number.isInteger(line.unitMinor) || line.unitMinor < 0)
    throw new RangeError("unit price must be ≥ 0 minor units");
  return line.quantity * line.unitMinor;
}

export type Totals = { subtotalMinor: number; taxMinor: number; totalMinor: number };

export function totalsOf(lines: Line[], rateBp: number): Totals {
  const subtotalMinor = lines.reduce((sum, l) => sum + lineTotal(l), 0);
  const taxMinor = taxOn(subtotalMinor, rateBp);
  return { subtotalMinor, taxMinor, totalMinor: subtotalMinor + taxMinor };
}

/** "8.25 %" from 825 bp. */
export function formatRate(rateBp: number): string {
  return `${(rateBp / 100).toFixed(2).replace(/\.?0+$/, "")} %`;
}
