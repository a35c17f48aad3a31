import { z } from "zod";
import { type MeterProfile, MeterProfileSchema, type MeterRange, parseQuantity } from "~/lib/engine";

// A meter's accuracy is written the way its manual states it, one range per line:
//   <full scale>, <resolution>, <% of reading>, <counts>     e.g.  6V, 1mV, 0.5, 2
// meaning ±(0.5 % of reading + 2 counts) on the 6 V range with 1 mV resolution.

type Unit = "V" | "ohm";

export function parseRangeLines(text: string, unit: Unit): { ranges: MeterRange[]; errors: string[] } {
  const ranges: MeterRange[] = [];
  const errors: string[] = [];
  text
    .split(/\r?\n/)
    .map((l) => l.trim())
    .forEach((line, i) => {
      if (!line) return;
      const parts = line.split(/\s*[,;]\s*/);
      if (parts.length !== 4) {
        errors.push(`Line ${i + 1}: write four values: full scale, resolution, % of reading, counts.`);
        return;
      }
      const fs = parseQuantity(parts[0], unit);
      const res = parseQuantity(parts[1], unit);
      const pct = Number(parts[2].replace(/%$/, ""));
      const counts = Number(parts[3]);
      if (!fs.ok || fs.value.value === "OL" || !(fs.value.value > 0)) {
        errors.push(
          `Line ${i + 1}: full scale "${parts[0]}" ${fs.ok ? "must be above zero" : `— ${fs.error.message}`}`,
        );
        return;
      }
      if (!res.ok || res.value.value === "OL" || !(res.value.value > 0)) {
        errors.push(
          `Line ${i + 1}: resolution "${parts[1]}" ${res.ok ? "must be above zero" : `— ${res.error.message}`}`,
        );
        return;
      }
      const range = { fullScale: fs.value.value, resolution: res.value.value, pctOfReading: pct, counts };
      const ok = MeterProfileSchema.shape.voltage.unwrap().element.safeParse(range);
      if (!ok.success) {
        errors.push(`Line ${i + 1}: % of reading must be 0-100 and counts 0-10000.`);
        return;
      }
      if (res.value.value >= fs.value.value) {
        errors.push(`Line ${i + 1}: the resolution must be smaller than the full scale.`);
        return;
      }
      ranges.push(ok.data);
    });
  return { ranges, errors };
}

const linesField = (unit: Unit) =>
  z
    .string()
    .max(2000)
    .optional()
    .transform((s, ctx) => {
      const { ranges, errors } = parseRangeLines(s ?? "", unit);
      for (const message of errors) ctx.addIssue({ code: "custom", message });
      if (ranges.length > 20) ctx.addIssue({ code: "custom", message: "At most 20 ranges per mode." });
      return ranges;
    });

export const MeterProfileFormSchema = z.object({
  id: z.string().max(40).optional(),
  name: z.string({ message: "Name the meter." }).trim().min(1, "Name the meter.").max(120),
  voltage: linesField("V"),
  resistance: linesField("ohm"),
  diode: linesField("V"),
  isDefault: z
    .string()
    .optional()
    .transform((v) => v === "on"),
});

export function toProfile(v: z.output<typeof MeterProfileFormSchema>): MeterProfile {
  return MeterProfileSchema.parse({
    name: v.name,
    ...(v.voltage.length ? { voltage: v.voltage } : {}),
    ...(v.resistance.length ? { resistance: v.resistance } : {}),
    ...(v.diode.length ? { diode: v.diode } : {}),
  });
}

const fmt = (x: number) => String(Number(x.toPrecision(6)));
export function rangesToLines(ranges: readonly MeterRange[] | undefined): string {
  return (ranges ?? [])
    .map((r) => `${fmt(r.fullScale)}, ${fmt(r.resolution)}, ${r.pctOfReading}, ${r.counts}`)
    .join("\n");
}
