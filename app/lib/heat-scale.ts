/** Failure-rate steps of the insights map shading (colours in app.css, --rw-heat-0 … --rw-heat-4). */
export const HEAT_STEPS = [
  { min: 0, label: "0 %" },
  { min: 0.000001, label: "under 5 %" },
  { min: 0.05, label: "5–10 %" },
  { min: 0.1, label: "10–20 %" },
  { min: 0.2, label: "20 % or more" },
] as const;

/** The step (0–4) of a rate; fixed bounds, so the same colour means the same rate on every board. */
export function heatStep(rate: number): number {
  let step = 0;
  HEAT_STEPS.forEach((s, i) => {
    if (rate >= s.min) step = i;
  });
  return step;
}
