// Where things sit on the invented OM-5150 standby-area picture (seed/demo-photo.server.ts draws it), in
// pixels, so the map's probe markers and the drawing cannot drift apart.

export const DEMO_PHOTO_ID = "demo-upload-om5150-standby";
export const DEMO_PHOTO_SIZE = { width: 640, height: 400 } as const;

export type Rect = { x: number; y: number; w: number; h: number };
/** A two-pad part (resistor, capacitor, inductor): the body between pad 1 (left) and pad 2 (right). */
export type TwoPad = { label: string; body: Rect; pad: { w: number; h: number }; kind: "r" | "c" | "l" };
/** A leadless IC with `perSide` pads on each side. */
export type Chip = { label: string; body: Rect; perSide: number };

export const CHIPS: Chip[] = [
  { label: "U401", body: { x: 96, y: 236, w: 64, h: 64 }, perSide: 4 },
  { label: "U402", body: { x: 330, y: 150, w: 64, h: 64 }, perSide: 4 },
];

export const TWO_PADS: TwoPad[] = [
  { label: "L401", kind: "l", body: { x: 84, y: 96, w: 72, h: 64 }, pad: { w: 18, h: 40 } },
  { label: "L402", kind: "l", body: { x: 470, y: 96, w: 72, h: 64 }, pad: { w: 18, h: 40 } },
  { label: "C415", kind: "c", body: { x: 488, y: 262, w: 30, h: 18 }, pad: { w: 14, h: 18 } },
  { label: "R362", kind: "r", body: { x: 292, y: 300, w: 22, h: 14 }, pad: { w: 12, h: 14 } },
];

/** Centre of pad 1 (left) or pad 2 (right) of a two-pad part, in pixels. */
export function padCentre(label: string, pad: 1 | 2) {
  const p = TWO_PADS.find((t) => t.label === label);
  if (!p) throw new Error(`no part ${label} on the demo picture`);
  const x = pad === 1 ? p.body.x - p.pad.w / 2 : p.body.x + p.body.w + p.pad.w / 2;
  return { x, y: p.body.y + p.body.h / 2 };
}

const relative = (pt: { x: number; y: number }) => ({
  x: Math.round((pt.x / DEMO_PHOTO_SIZE.width) * 1000) / 1000,
  y: Math.round((pt.y / DEMO_PHOTO_SIZE.height) * 1000) / 1000,
});

/** Probe markers (0..1 of the picture) for the nets whose probe point is on the picture. */
export const DEMO_PHOTO_MARKERS = {
  // 3V3_STBY: "C415 pad" (the output side of the 3.3 V standby buck).
  "v3p3-stby": relative(padCentre("C415", 1)),
  // EN_3V3_STBY: "R362 pad 2" (the enable side of the series resistor).
  "en-3v3-stby": relative(padCentre("R362", 2)),
  // 5V_STBY: "L401 output pad".
  "v5-stby": relative(padCentre("L401", 2)),
} as const;
