import { z } from "zod";
import {
  formatQuantity,
  type Mode,
  NodeIdSchema,
  type PartType,
  parseQuantity,
  parseRange,
  type Range,
  unitForMode,
} from "~/lib/engine";

// Field-level schemas for the editor's side panel: each takes the text a lead typed and yields the
// document value, with the engine doing the unit parsing so the panel and the bench read values alike.

const quantity = (unit: "V" | "ohm") =>
  z.string().transform((s, ctx) => {
    const r = parseQuantity(s.trim(), unit);
    if (!r.ok) {
      ctx.addIssue({ code: "custom", message: r.error.message });
      return z.NEVER;
    }
    if (r.value.value === "OL") {
      ctx.addIssue({ code: "custom", message: "Enter a number, not OL." });
      return z.NEVER;
    }
    return r.value.value;
  });

export const NameFieldSchema = z
  .string()
  .trim()
  .min(1, "Give it a name.")
  .max(120, "At most 120 characters.");
export const NotesFieldSchema = z.string().max(4000, "At most 4000 characters.");
export const VoltsFieldSchema = quantity("V");
export const OhmsFieldSchema = quantity("ohm").pipe(z.number().min(0, "Must not be negative."));
export const PercentFieldSchema = z
  .string()
  .trim()
  .transform((s) => Number(s.replace(",", ".").replace(/%$/, "")))
  .pipe(z.number({ message: "Enter a percentage." }).min(0, "0-100 %.").max(100, "0-100 %."));
export const SecondsFieldSchema = z
  .string()
  .trim()
  .transform((s) => Number(s))
  .pipe(
    z
      .number({ message: "Enter seconds as a number." })
      .int("Whole seconds.")
      .min(0, "Must not be negative.")
      .max(86_400, "At most a day (86400 s)."),
  );
export const ProbeTextFieldSchema = z.string().trim().max(200, "At most 200 characters.");
export const RefdesFieldSchema = z
  .string()
  .trim()
  .max(32, "At most 32 characters.")
  .regex(/^[A-Za-z]{0,4}[0-9]*[A-Za-z0-9_-]*$/, "Letters then digits, e.g. U7 or PR12.");
export const NodeIdFieldSchema = NodeIdSchema;

/** Optional threshold: empty text clears it. */
export const optionalOf = <T extends z.ZodType>(schema: T) =>
  z.string().transform((s, ctx) => {
    if (!s.trim()) return undefined;
    const r = schema.safeParse(s);
    if (!r.success) {
      for (const i of r.error.issues) ctx.addIssue({ code: "custom", message: i.message });
      return z.NEVER;
    }
    return r.data as z.output<T>;
  });

/** Expected range for one mode: "3.3V ±5%" or "2.97..3.63 V"; empty text removes the range. */
export function rangeFieldSchema(mode: Mode) {
  return z.string().transform((s, ctx): Range | undefined => {
    if (!s.trim()) return undefined;
    const r = parseRange(s, unitForMode(mode));
    if (!r.ok) {
      ctx.addIssue({ code: "custom", message: r.error.message });
      return z.NEVER;
    }
    return r.value;
  });
}

export function rangeToText(range: Range | undefined, mode: Mode): string {
  if (!range) return "";
  const unit = unitForMode(mode);
  if ("nominal" in range) return `${formatQuantity(range.nominal, unit)} ±${range.tolerancePct}%`;
  return `${formatQuantity(range.min, unit)}..${formatQuantity(range.max, unit)}`;
}

/**
 * A part's marked value. Resistors and capacitors must read as an IEC 60062 code or an SI value
 * (4K7, 100R, 1n5, 10uF); other parts keep free text such as a regulator's output setting.
 */
export function valueFieldSchema(partType: PartType) {
  return z
    .string()
    .trim()
    .max(40, "At most 40 characters.")
    .superRefine((s, ctx) => {
      if (!s || partType !== "resistor") return;
      const r = parseQuantity(s, "ohm");
      if (!r.ok || r.value.value === "OL")
        ctx.addIssue({
          code: "custom",
          message: `Write the resistance as an IEC 60062 code or value, e.g. 4K7, 100R, 0R, 2M2 (${r.ok ? "not OL" : r.error.message}).`,
        });
    });
}

export const FixLabelFieldSchema = z
  .string()
  .trim()
  .min(1, "Describe the fix.")
  .max(200, "At most 200 characters.");

export function firstError(r: { success: boolean; error?: z.ZodError }): string | null {
  return r.success ? null : (r.error?.issues[0]?.message ?? "Not valid.");
}
