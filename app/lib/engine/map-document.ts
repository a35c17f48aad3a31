import { z } from "zod";
import { fail, guard, ok, type Result } from "./result";

/** Hard limits: bigger inputs are refused rather than processed slowly. */
export const MAX_NODES = 2000;
export const MAX_EDGES = 10000;
export const MAX_MAP_JSON_CHARS = 5_000_000;
export const MAP_FORMAT = "railwise.map";
export const MAP_VERSION = 1;

/** Ids are stable across map versions; no ':' so `short:<netId>` candidate ids stay unambiguous. */
export const NodeIdSchema = z
  .string()
  .regex(/^[A-Za-z0-9_.-]{1,64}$/, "Ids are 1-64 characters: letters, digits, '_', '.', '-'");

const text = (max: number) => z.string().max(max);
const finite = z.number().refine(Number.isFinite, "must be a finite number");

export const NominalRangeSchema = z
  .object({ nominal: finite, tolerancePct: finite.pipe(z.number().min(0).max(100)) })
  .strict();
export const MinMaxRangeSchema = z
  .object({ min: finite, max: finite })
  .strict()
  .refine((r) => r.min <= r.max, "min must not exceed max");
export const RangeSchema = z.union([NominalRangeSchema, MinMaxRangeSchema]);

export const MODES = ["voltage", "resistance", "diode"] as const;
export const ModeSchema = z.enum(MODES);

export const ExpectedSchema = z
  .object({
    voltage: RangeSchema.optional(),
    resistance: RangeSchema.optional(),
    diode: RangeSchema.optional(),
  })
  .strict();

export const ProbePointSchema = z
  .object({
    text: text(200),
    seconds: finite.pipe(z.number().min(0).max(86_400)),
    needsDisassembly: z.boolean(),
    photo: z
      .object({ uploadId: text(200), x: z.number().min(0).max(1), y: z.number().min(0).max(1) })
      .strict()
      .optional(),
  })
  .strict();

export const PositionSchema = z.object({ x: finite, y: finite }).strict();

export const STAGES = ["G3", "S5", "S4", "S3", "S0"] as const;
export const StageSchema = z.enum(STAGES);

export const FIX_KINDS = ["replace", "reflow", "clean-corrosion", "check-series-resistor", "other"] as const;
export const FixSchema = z.object({ id: NodeIdSchema, kind: z.enum(FIX_KINDS), label: text(200) }).strict();

export const PART_TYPES = [
  "regulator",
  "load-switch",
  "mosfet",
  "resistor",
  "controller",
  "charger",
  "other",
] as const;

const common = {
  id: NodeIdSchema,
  name: text(120),
  notes: text(4000).optional(),
  position: PositionSchema.optional(),
};

const netCommon = {
  ...common,
  expected: ExpectedSchema,
  probe: ProbePointSchema,
  stage: StageSchema.optional(),
  sharedDrivers: z.literal(true).optional(),
  missingThresholdV: finite.pipe(z.number().min(0)).optional(),
  shortedThresholdOhm: finite.pipe(z.number().min(0)).optional(),
  safetyNotes: text(4000).optional(),
};

export const SourceNodeSchema = z
  .object({
    ...common,
    kind: z.literal("source"),
    sourceKind: z.enum(["charger", "battery", "button", "bench-supply", "other"]).optional(),
    safetyNotes: text(4000).optional(),
  })
  .strict();

export const RailNodeSchema = z
  .object({
    ...netCommon,
    kind: z.literal("rail"),
    nominalV: finite,
    tolerancePct: finite.pipe(z.number().min(0).max(100)),
  })
  .strict();

export const SignalNodeSchema = z
  .object({ ...netCommon, kind: z.literal("signal"), highV: finite, activeLow: z.boolean().optional() })
  .strict();

export const PartNodeSchema = z
  .object({
    ...common,
    kind: z.literal("part"),
    partType: z.enum(PART_TYPES),
    refdes: text(32),
    value: text(40).optional(),
    package: text(40).optional(),
    fixes: z.array(FixSchema).max(50),
    safetyNotes: text(4000).optional(),
  })
  .strict();

export const MapNodeSchema = z.discriminatedUnion("kind", [
  SourceNodeSchema,
  RailNodeSchema,
  SignalNodeSchema,
  PartNodeSchema,
]);

export const EDGE_KINDS = ["supplies", "feeds", "drives"] as const;
export const MapEdgeSchema = z
  .object({ id: NodeIdSchema, from: NodeIdSchema, to: NodeIdSchema, kind: z.enum(EDGE_KINDS) })
  .strict();

export const BoardSchema = z
  .object({
    maker: text(120).optional(),
    model: text(120).optional(),
    boardNumber: text(60).optional(),
    revision: text(20).optional(),
    input: z
      .object({
        kind: z.enum(["usb-c-pd", "barrel", "other"]),
        volts: finite.pipe(z.number().min(0).max(1000)),
      })
      .strict()
      .optional(),
    batteryCells: z.number().int().min(0).max(16).optional(),
  })
  .strict();

export const STRATEGIES = ["order", "split", "best"] as const;
export const StrategySchema = z.enum(STRATEGIES);

export const MapSettingsSchema = z
  .object({
    strategy: StrategySchema,
    missingThresholdV: finite.pipe(z.number().min(0)).optional(),
    shortedThresholdOhm: finite.pipe(z.number().min(0)).optional(),
  })
  .strict();

export const MapDocumentSchema = z
  .object({
    format: z.literal(MAP_FORMAT),
    version: z.literal(MAP_VERSION),
    board: BoardSchema.optional(),
    settings: MapSettingsSchema,
    nodes: z.array(MapNodeSchema).max(MAX_NODES, `A map may hold at most ${MAX_NODES} nodes`),
    edges: z.array(MapEdgeSchema).max(MAX_EDGES, `A map may hold at most ${MAX_EDGES} edges`),
  })
  .strict();

export type Range = z.infer<typeof RangeSchema>;
export type Mode = z.infer<typeof ModeSchema>;
export type Expected = z.infer<typeof ExpectedSchema>;
export type ProbePoint = z.infer<typeof ProbePointSchema>;
export type Stage = z.infer<typeof StageSchema>;
export type Fix = z.infer<typeof FixSchema>;
export type PartType = (typeof PART_TYPES)[number];
export type SourceNode = z.infer<typeof SourceNodeSchema>;
export type RailNode = z.infer<typeof RailNodeSchema>;
export type SignalNode = z.infer<typeof SignalNodeSchema>;
export type NetNode = RailNode | SignalNode;
export type PartNode = z.infer<typeof PartNodeSchema>;
export type MapNode = z.infer<typeof MapNodeSchema>;
export type EdgeKind = (typeof EDGE_KINDS)[number];
export type MapEdge = z.infer<typeof MapEdgeSchema>;
export type Board = z.infer<typeof BoardSchema>;
export type Strategy = z.infer<typeof StrategySchema>;
export type MapSettings = z.infer<typeof MapSettingsSchema>;
export type MapDocument = z.infer<typeof MapDocumentSchema>;

export const isNet = (n: MapNode): n is NetNode => n.kind === "rail" || n.kind === "signal";

/** JSON Schema (draft 2020-12) of the map document, for other tools and for documentation. */
export function mapDocumentJsonSchema(): Record<string, unknown> {
  return z.toJSONSchema(MapDocumentSchema) as Record<string, unknown>;
}

function formatZodIssues(error: z.ZodError): string {
  return error.issues
    .slice(0, 10)
    .map((i) => `${i.path.length ? i.path.join(".") : "(document)"}: ${i.message}`)
    .join("; ");
}

/** Checks the shape of an unknown value (no graph checks: see validateMap). */
export const parseMapDocument = guard((input: unknown): Result<MapDocument> => {
  if (input && typeof input === "object") {
    const o = input as { nodes?: unknown; edges?: unknown };
    if (Array.isArray(o.nodes) && o.nodes.length > MAX_NODES)
      return fail("too-large", `The map has ${o.nodes.length} nodes; at most ${MAX_NODES} are accepted.`);
    if (Array.isArray(o.edges) && o.edges.length > MAX_EDGES)
      return fail("too-large", `The map has ${o.edges.length} edges; at most ${MAX_EDGES} are accepted.`);
  }
  const parsed = MapDocumentSchema.safeParse(input);
  if (!parsed.success)
    return fail("invalid-map", `Not a valid map document: ${formatZodIssues(parsed.error)}`);
  return ok(parsed.data);
});

/** Reads a map from its JSON text (the stored/exported form). */
export const mapFromJson = guard((json: string): Result<MapDocument> => {
  if (typeof json !== "string") return fail("invalid-input", "Expected the map as JSON text.");
  if (json.length > MAX_MAP_JSON_CHARS)
    return fail("too-large", `The map text is ${json.length} characters; at most ${MAX_MAP_JSON_CHARS}.`);
  let value: unknown;
  try {
    value = JSON.parse(json);
  } catch (e) {
    return fail("parse", `The map is not valid JSON: ${e instanceof Error ? e.message : String(e)}`);
  }
  return parseMapDocument(value);
});

/** Canonical JSON text: key order follows the schema, so equal documents give equal text. */
export const mapToJson = guard((doc: MapDocument): Result<string> => {
  const parsed = parseMapDocument(doc);
  if (!parsed.ok) return parsed;
  return ok(JSON.stringify(parsed.value, null, 2));
});
