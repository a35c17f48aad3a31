import { z } from "zod";
import { parseQuantity } from "~/lib/engine";

export const INPUT_TYPES = ["usb-c-pd", "barrel", "other"] as const;
export const INPUT_LABEL = { "usb-c-pd": "USB-C PD", barrel: "Barrel jack", other: "Other" } as const;

const required = (what: string, max: number) =>
  z
    .string({ message: `Enter the ${what}.` })
    .trim()
    .min(1, `Enter the ${what}.`)
    .max(max, `At most ${max} characters.`);

export const BoardFormSchema = z.object({
  maker: required("maker", 120),
  model: required("model", 120),
  boardNumber: required("board number", 60),
  revision: z.string().trim().max(20, "At most 20 characters.").optional().default(""),
  inputType: z.enum(INPUT_TYPES, { message: "Choose the input type." }),
  // Typed like a schematic label ("20V", "19.5 V", "5V"); stored in millivolts.
  inputVolts: z.string({ message: "Enter the input voltage, e.g. 20V." }).transform((s, ctx) => {
    const q = parseQuantity(s.trim(), "V");
    if (!q.ok || q.value.value === "OL" || !(q.value.value > 0) || q.value.value > 1000) {
      ctx.addIssue({
        code: "custom",
        message: q.ok ? "Enter a voltage above 0 and up to 1000 V." : q.error.message,
      });
      return z.NEVER;
    }
    return Math.round(q.value.value * 1000);
  }),
  batteryCells: z.coerce
    .number({ message: "Enter the number of cells in series (0 for none)." })
    .int("Whole cells.")
    .min(0, "0 for a board without a battery.")
    .max(16, "At most 16 cells in series."),
  notes: z.string().max(4000).optional().default(""),
});

export type BoardForm = z.output<typeof BoardFormSchema>;

export const BoardFilterSchema = z.object({
  q: z.string().trim().max(120).optional().catch(undefined),
  maker: z.string().trim().max(120).optional().catch(undefined),
  model: z.string().trim().max(120).optional().catch(undefined),
  boardNumber: z.string().trim().max(60).optional().catch(undefined),
  revision: z.string().trim().max(20).optional().catch(undefined),
  archived: z.enum(["0", "1"]).optional().catch(undefined),
});
