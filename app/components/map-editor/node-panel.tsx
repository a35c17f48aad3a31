import { useEffect, useId, useState } from "react";
import { useFetcher } from "react-router";
import type { z } from "zod";
import {
  FIX_KINDS,
  type MapNode,
  type MapSettings,
  MODES,
  type NetNode,
  PART_TYPES,
  type PartNode,
  STAGES,
  STRATEGIES,
  type SourceNode,
} from "~/lib/engine";
import {
  FixLabelFieldSchema,
  firstError,
  NameFieldSchema,
  NotesFieldSchema,
  OhmsFieldSchema,
  optionalOf,
  PercentFieldSchema,
  ProbeTextFieldSchema,
  RefdesFieldSchema,
  rangeFieldSchema,
  rangeToText,
  SecondsFieldSchema,
  VoltsFieldSchema,
  valueFieldSchema,
} from "~/lib/map-node-fields";

const MODE_LABEL = { voltage: "Voltage", resistance: "Resistance to ground", diode: "Diode mode" } as const;
const MODE_HINT = {
  voltage: "e.g. 3.3V ±5% or 3.1..3.5 V",
  resistance: "e.g. 10k..1M",
  diode: "e.g. 0.3..0.7 V",
} as const;
const STRATEGY_LABEL = {
  order: "Power-up order (earliest failing stage first)",
  split: "Halve the suspects each reading",
  best: "Best value per minute (default)",
} as const;

/** A text field that commits its parsed value on blur or Enter and keeps the typed text with an error when invalid. */
function CommitField<S extends z.ZodType>({
  label,
  value,
  schema,
  onCommit,
  readOnly,
  hint,
  multiline,
  mono,
}: {
  label: string;
  value: string;
  schema: S;
  onCommit: (v: z.output<S>) => void;
  readOnly: boolean;
  hint?: string;
  multiline?: boolean;
  mono?: boolean;
}) {
  const id = useId();
  const [text, setText] = useState(value);
  const [error, setError] = useState<string | null>(null);
  useEffect(() => {
    setText(value);
    setError(null);
  }, [value]);
  const commit = () => {
    if (readOnly || text === value) return;
    const r = schema.safeParse(text);
    const msg = firstError(r);
    setError(msg);
    if (r.success) onCommit(r.data as z.output<S>);
  };
  const common = {
    id,
    value: text,
    readOnly,
    "aria-invalid": error ? true : undefined,
    "aria-describedby": error ? `${id}-err` : hint ? `${id}-hint` : undefined,
    className: `field-input ${mono ? "font-mono" : ""} text-sm`,
    onBlur: commit,
  };
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="text-xs font-medium">
        {label}
      </label>
      {multiline ? (
        <textarea {...common} rows={3} onChange={(e) => setText(e.target.value)} />
      ) : (
        <input
          {...common}
          onChange={(e) => setText(e.target.value)}
          onKeyDown={(e) => {
            if (e.key === "Enter") {
              e.preventDefault();
              commit();
            }
          }}
        />
      )}
      {error ? (
        <p id={`${id}-err`} className="text-xs text-bad" role="alert">
          {error}
        </p>
      ) : hint ? (
        <p id={`${id}-hint`} className="text-xs text-muted">
          {hint}
        </p>
      ) : null}
    </div>
  );
}

function SelectField<T extends string>({
  label,
  value,
  options,
  onChange,
  readOnly,
  labels,
}: {
  label: string;
  value: T | "";
  options: readonly T[];
  onChange: (v: T | "") => void;
  readOnly: boolean;
  labels?: Partial<Record<T, string>>;
  allowEmpty?: boolean;
}) {
  const id = useId();
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="text-xs font-medium">
        {label}
      </label>
      <select
        id={id}
        className="field-input text-sm"
        value={value}
        disabled={readOnly}
        onChange={(e) => onChange(e.target.value as T | "")}
      >
        {options.map((o) => (
          <option key={o || "none"} value={o}>
            {labels?.[o] ?? (o || "—")}
          </option>
        ))}
      </select>
    </div>
  );
}

function Check({
  label,
  checked,
  onChange,
  readOnly,
}: {
  label: string;
  checked: boolean;
  onChange: (v: boolean) => void;
  readOnly: boolean;
}) {
  return (
    <label className="flex items-center gap-2 text-sm">
      <input
        type="checkbox"
        checked={checked}
        disabled={readOnly}
        onChange={(e) => onChange(e.target.checked)}
      />
      {label}
    </label>
  );
}

export function NodePanel({
  node,
  onChange,
  readOnly,
  mapId,
}: {
  node: MapNode;
  onChange: (n: MapNode) => void;
  readOnly: boolean;
  mapId: string;
}) {
  return (
    <section className="flex flex-col gap-3" aria-label={`Edit ${node.kind} ${node.name}`}>
      <div className="flex items-baseline justify-between">
        <h2 className="font-semibold capitalize">{node.kind}</h2>
        <span className="font-mono text-xs text-muted">id {node.id}</span>
      </div>
      <CommitField
        label="Name"
        value={node.name}
        schema={NameFieldSchema}
        readOnly={readOnly}
        onCommit={(name) => onChange({ ...node, name })}
      />
      {node.kind === "source" ? <SourceFields node={node} onChange={onChange} readOnly={readOnly} /> : null}
      {node.kind === "rail" || node.kind === "signal" ? (
        <NetFields node={node} onChange={onChange} readOnly={readOnly} mapId={mapId} />
      ) : null}
      {node.kind === "part" ? <PartFields node={node} onChange={onChange} readOnly={readOnly} /> : null}
      <CommitField
        label="Notes"
        value={node.notes ?? ""}
        schema={NotesFieldSchema}
        multiline
        readOnly={readOnly}
        onCommit={(notes) => onChange({ ...node, notes: notes || undefined })}
      />
    </section>
  );
}

function SourceFields({
  node,
  onChange,
  readOnly,
}: {
  node: SourceNode;
  onChange: (n: MapNode) => void;
  readOnly: boolean;
}) {
  return (
    <>
      <SelectField
        label="Source kind"
        value={node.sourceKind ?? "other"}
        options={["charger", "battery", "button", "bench-supply", "other"] as const}
        readOnly={readOnly}
        onChange={(v) => onChange({ ...node, sourceKind: v || undefined })}
      />
      <CommitField
        label="Safety notes"
        value={node.safetyNotes ?? ""}
        schema={NotesFieldSchema}
        multiline
        readOnly={readOnly}
        hint="e.g. disconnect the battery before rework; follow your local electrical codes for mains supplies."
        onCommit={(v) => onChange({ ...node, safetyNotes: v || undefined })}
      />
    </>
  );
}

function NetFields({
  node,
  onChange,
  readOnly,
  mapId,
}: {
  node: NetNode;
  onChange: (n: MapNode) => void;
  readOnly: boolean;
  mapId: string;
}) {
  return (
    <>
      {node.kind === "rail" ? (
        <div className="grid grid-cols-2 gap-2">
          <CommitField
            label="Nominal voltage"
            value={`${node.nominalV} V`}
            schema={VoltsFieldSchema}
            mono
            readOnly={readOnly}
            onCommit={(v) => onChange({ ...node, nominalV: v })}
          />
          <CommitField
            label="Tolerance %"
            value={String(node.tolerancePct)}
            schema={PercentFieldSchema}
            mono
            readOnly={readOnly}
            onCommit={(v) => onChange({ ...node, tolerancePct: v })}
          />
        </div>
      ) : (
        <div className="grid grid-cols-2 gap-2">
          <CommitField
            label="High level"
            value={`${node.highV} V`}
            schema={VoltsFieldSchema}
            mono
            readOnly={readOnly}
            onCommit={(v) => onChange({ ...node, highV: v })}
          />
          <div className="flex items-end pb-2">
            <Check
              label="Active low"
              checked={!!node.activeLow}
              readOnly={readOnly}
              onChange={(v) => onChange({ ...node, activeLow: v || undefined })}
            />
          </div>
        </div>
      )}
      <SelectField
        label="Stage (sleep state where it must be present)"
        value={node.stage ?? ""}
        options={["", ...STAGES] as const}
        labels={{ "": "not tagged" }}
        readOnly={readOnly}
        onChange={(v) => onChange({ ...node, stage: v || undefined })}
      />
      <fieldset className="flex flex-col gap-2 rounded-md border border-line p-2">
        <legend className="px-1 text-xs font-semibold">Expected readings</legend>
        {MODES.map((mode) => (
          <CommitField
            key={mode}
            label={MODE_LABEL[mode]}
            value={rangeToText(node.expected[mode], mode)}
            schema={rangeFieldSchema(mode)}
            mono
            hint={MODE_HINT[mode]}
            readOnly={readOnly}
            onCommit={(r) => {
              const expected = { ...node.expected };
              if (r) expected[mode] = r;
              else delete expected[mode];
              onChange({ ...node, expected });
            }}
          />
        ))}
      </fieldset>
      <fieldset className="flex flex-col gap-2 rounded-md border border-line p-2">
        <legend className="px-1 text-xs font-semibold">Probe point</legend>
        <CommitField
          label="Where to probe"
          value={node.probe.text}
          schema={ProbeTextFieldSchema}
          readOnly={readOnly}
          onCommit={(text) => onChange({ ...node, probe: { ...node.probe, text } })}
        />
        <CommitField
          label="Seconds to take the reading"
          value={String(node.probe.seconds)}
          schema={SecondsFieldSchema}
          mono
          readOnly={readOnly}
          onCommit={(seconds) => onChange({ ...node, probe: { ...node.probe, seconds } })}
        />
        <Check
          label="Needs disassembly"
          checked={node.probe.needsDisassembly}
          readOnly={readOnly}
          onChange={(v) => onChange({ ...node, probe: { ...node.probe, needsDisassembly: v } })}
        />
        <ProbePhoto node={node} onChange={onChange} readOnly={readOnly} mapId={mapId} />
      </fieldset>
      <Check
        label="Shared by several drivers (e.g. OR-ed supply)"
        checked={!!node.sharedDrivers}
        readOnly={readOnly}
        onChange={(v) => onChange({ ...node, sharedDrivers: v ? true : undefined })}
      />
      <div className="grid grid-cols-2 gap-2">
        <CommitField
          label="Missing below (V)"
          value={node.missingThresholdV === undefined ? "" : String(node.missingThresholdV)}
          schema={optionalOf(VoltsFieldSchema)}
          mono
          readOnly={readOnly}
          hint="empty: map setting"
          onCommit={(v) => onChange({ ...node, missingThresholdV: v })}
        />
        <CommitField
          label="Shorted below (Ω)"
          value={node.shortedThresholdOhm === undefined ? "" : String(node.shortedThresholdOhm)}
          schema={optionalOf(OhmsFieldSchema)}
          mono
          readOnly={readOnly}
          hint="empty: map setting"
          onCommit={(v) => onChange({ ...node, shortedThresholdOhm: v })}
        />
      </div>
      <CommitField
        label="Safety notes"
        value={node.safetyNotes ?? ""}
        schema={NotesFieldSchema}
        multiline
        readOnly={readOnly}
        onCommit={(v) => onChange({ ...node, safetyNotes: v || undefined })}
      />
    </>
  );
}

type UploadResult = { ok: true; uploadId: string } | { ok: false; message: string };

function ProbePhoto({
  node,
  onChange,
  readOnly,
  mapId,
}: {
  node: NetNode;
  onChange: (n: MapNode) => void;
  readOnly: boolean;
  mapId: string;
}) {
  const fetcher = useFetcher<UploadResult>();
  const photo = node.probe.photo;
  const id = useId();
  // biome-ignore lint/correctness/useExhaustiveDependencies: react to a finished upload only
  useEffect(() => {
    if (fetcher.state === "idle" && fetcher.data?.ok)
      onChange({
        ...node,
        probe: { ...node.probe, photo: { uploadId: fetcher.data.uploadId, x: 0.5, y: 0.5 } },
      });
  }, [fetcher.state, fetcher.data]);
  return (
    <div className="flex flex-col gap-2">
      {photo ? (
        <div className="flex flex-col gap-1">
          <button
            type="button"
            className="relative block w-full cursor-crosshair overflow-hidden rounded border border-line p-0"
            disabled={readOnly}
            aria-label="Board photo: click to place the probe marker"
            onClick={(e) => {
              const r = e.currentTarget.getBoundingClientRect();
              const x = Math.min(1, Math.max(0, (e.clientX - r.left) / r.width));
              const y = Math.min(1, Math.max(0, (e.clientY - r.top) / r.height));
              onChange({
                ...node,
                probe: {
                  ...node.probe,
                  photo: { ...photo, x: Math.round(x * 1000) / 1000, y: Math.round(y * 1000) / 1000 },
                },
              });
            }}
          >
            <img
              src={`/uploads/${photo.uploadId}`}
              alt="Board near the probe point"
              className="block w-full"
            />
            <span
              data-testid="probe-marker"
              className="pointer-events-none absolute h-4 w-4 -translate-x-1/2 -translate-y-1/2 rounded-full border-2 border-white bg-bad shadow"
              style={{ left: `${photo.x * 100}%`, top: `${photo.y * 100}%` }}
            />
          </button>
          <p className="text-xs text-muted">
            Marker at {Math.round(photo.x * 100)}% across, {Math.round(photo.y * 100)}% down.
            {readOnly ? "" : " Click the photo to move it."}
          </p>
          {readOnly ? null : (
            <button
              type="button"
              className="btn self-start px-2 py-1 text-xs"
              onClick={() => onChange({ ...node, probe: { ...node.probe, photo: undefined } })}
            >
              Remove photo
            </button>
          )}
        </div>
      ) : null}
      {readOnly ? null : (
        <fetcher.Form method="post" action={`/maps/${mapId}/photos`} encType="multipart/form-data">
          <label htmlFor={id} className="text-xs font-medium">
            {photo ? "Replace board photo" : "Board photo (JPEG, PNG or WebP, up to 5 MB)"}
          </label>
          <input
            id={id}
            type="file"
            name="photo"
            accept="image/png,image/jpeg,image/webp"
            className="block w-full text-xs"
            onChange={(e) => {
              if (e.currentTarget.files?.length) fetcher.submit(e.currentTarget.form);
            }}
          />
          {fetcher.state !== "idle" ? <p className="text-xs text-muted">Uploading…</p> : null}
          {fetcher.state === "idle" && fetcher.data && !fetcher.data.ok ? (
            <p className="text-xs text-bad" role="alert">
              {fetcher.data.message}
            </p>
          ) : null}
        </fetcher.Form>
      )}
    </div>
  );
}

function PartFields({
  node,
  onChange,
  readOnly,
}: {
  node: PartNode;
  onChange: (n: MapNode) => void;
  readOnly: boolean;
}) {
  const [newFix, setNewFix] = useState("");
  const [fixError, setFixError] = useState<string | null>(null);
  return (
    <>
      <SelectField
        label="Part type"
        value={node.partType}
        options={PART_TYPES}
        readOnly={readOnly}
        onChange={(v) => v && onChange({ ...node, partType: v })}
      />
      <div className="grid grid-cols-2 gap-2">
        <CommitField
          label="Reference designator"
          value={node.refdes}
          schema={RefdesFieldSchema}
          mono
          readOnly={readOnly}
          onCommit={(refdes) => onChange({ ...node, refdes })}
        />
        <CommitField
          label="Value (IEC 60062)"
          value={node.value ?? ""}
          schema={valueFieldSchema(node.partType)}
          mono
          readOnly={readOnly}
          hint="e.g. 4K7, 100R, 1n5"
          onCommit={(value) => onChange({ ...node, value: value || undefined })}
        />
      </div>
      <CommitField
        label="Package"
        value={node.package ?? ""}
        schema={NotesFieldSchema.max(40, "At most 40 characters.")}
        readOnly={readOnly}
        onCommit={(v) => onChange({ ...node, package: v || undefined })}
      />
      <fieldset className="flex flex-col gap-2 rounded-md border border-line p-2">
        <legend className="px-1 text-xs font-semibold">Fixes</legend>
        {node.fixes.length === 0 ? <p className="text-xs text-muted">No fixes listed.</p> : null}
        <ul className="flex flex-col gap-1">
          {node.fixes.map((f, i) => (
            <li key={f.id} className="flex items-start gap-1">
              <select
                aria-label={`Kind of fix ${i + 1}`}
                className="field-input w-36 py-1 text-xs"
                value={f.kind}
                disabled={readOnly}
                onChange={(e) =>
                  onChange({
                    ...node,
                    fixes: node.fixes.map((x) =>
                      x.id === f.id ? { ...x, kind: e.target.value as (typeof FIX_KINDS)[number] } : x,
                    ),
                  })
                }
              >
                {FIX_KINDS.map((k) => (
                  <option key={k} value={k}>
                    {k}
                  </option>
                ))}
              </select>
              <FixLabel
                index={i}
                label={f.label}
                readOnly={readOnly}
                onCommit={(label) =>
                  onChange({ ...node, fixes: node.fixes.map((x) => (x.id === f.id ? { ...x, label } : x)) })
                }
              />
              {readOnly ? null : (
                <button
                  type="button"
                  className="btn min-h-0 px-2 py-0.5 text-xs"
                  aria-label={`Remove fix ${f.label}`}
                  onClick={() => onChange({ ...node, fixes: node.fixes.filter((x) => x.id !== f.id) })}
                >
                  ✕
                </button>
              )}
            </li>
          ))}
        </ul>
        {readOnly ? null : (
          <div className="flex flex-col gap-1">
            <div className="flex gap-1">
              <input
                aria-label="New fix"
                className="field-input py-1 text-xs"
                placeholder="e.g. Replace the series resistor"
                value={newFix}
                onChange={(e) => setNewFix(e.target.value)}
              />
              <button
                type="button"
                className="btn px-2 py-1 text-xs"
                onClick={() => {
                  const r = FixLabelFieldSchema.safeParse(newFix);
                  setFixError(firstError(r));
                  if (!r.success) return;
                  let n = node.fixes.length + 1;
                  while (node.fixes.some((f) => f.id === `fix-${n}`)) n++;
                  onChange({
                    ...node,
                    fixes: [...node.fixes, { id: `fix-${n}`, kind: "replace", label: r.data }],
                  });
                  setNewFix("");
                }}
              >
                Add fix
              </button>
            </div>
            {fixError ? (
              <p className="text-xs text-bad" role="alert">
                {fixError}
              </p>
            ) : null}
          </div>
        )}
      </fieldset>
      <CommitField
        label="Safety notes"
        value={node.safetyNotes ?? ""}
        schema={NotesFieldSchema}
        multiline
        readOnly={readOnly}
        hint="e.g. disconnect the battery before hot air on this part; ventilate flux fumes."
        onCommit={(v) => onChange({ ...node, safetyNotes: v || undefined })}
      />
    </>
  );
}

/** A fix's label, edited in place: committed on blur or Enter, refused with a message when empty or too long. */
function FixLabel({
  index,
  label,
  readOnly,
  onCommit,
}: {
  index: number;
  label: string;
  readOnly: boolean;
  onCommit: (label: string) => void;
}) {
  const id = useId();
  const [text, setText] = useState(label);
  const [error, setError] = useState<string | null>(null);
  useEffect(() => {
    setText(label);
    setError(null);
  }, [label]);
  if (readOnly)
    return (
      <span className="flex-1 truncate py-1 text-xs" title={label}>
        {label}
      </span>
    );
  const commit = () => {
    if (text === label) return setError(null);
    const r = FixLabelFieldSchema.safeParse(text);
    setError(firstError(r));
    if (r.success) onCommit(r.data);
  };
  return (
    <span className="flex min-w-0 flex-1 flex-col gap-0.5">
      <input
        aria-label={`Label of fix ${index + 1}`}
        className="field-input py-1 text-xs"
        value={text}
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? `${id}-err` : undefined}
        onChange={(e) => setText(e.target.value)}
        onBlur={commit}
        onKeyDown={(e) => {
          if (e.key === "Enter") {
            e.preventDefault();
            commit();
          }
        }}
      />
      {error ? (
        <span id={`${id}-err`} className="text-xs text-bad" role="alert">
          {error}
        </span>
      ) : null}
    </span>
  );
}

export function SettingsPanel({
  settings,
  onChange,
  readOnly,
}: {
  settings: MapSettings;
  onChange: (s: MapSettings) => void;
  readOnly: boolean;
}) {
  return (
    <div className="flex flex-col gap-3">
      <h2 className="font-semibold">Map settings</h2>
      <SelectField
        label="Strategy for choosing the next reading"
        value={settings.strategy}
        options={STRATEGIES}
        labels={STRATEGY_LABEL}
        readOnly={readOnly}
        onChange={(v) => v && onChange({ ...settings, strategy: v })}
      />
      <CommitField
        label="Missing below (V)"
        value={settings.missingThresholdV === undefined ? "" : String(settings.missingThresholdV)}
        schema={optionalOf(VoltsFieldSchema)}
        mono
        readOnly={readOnly}
        hint="A voltage reading below this counts as missing; empty uses 0.1 V."
        onCommit={(v) => onChange({ ...settings, missingThresholdV: v })}
      />
      <CommitField
        label="Shorted below (Ω)"
        value={settings.shortedThresholdOhm === undefined ? "" : String(settings.shortedThresholdOhm)}
        schema={optionalOf(OhmsFieldSchema)}
        mono
        readOnly={readOnly}
        hint="A resistance below this counts as a short to ground; empty uses 1 Ω."
        onCommit={(v) => onChange({ ...settings, shortedThresholdOhm: v })}
      />
      <p className="text-xs text-muted">
        Readings are judged with the shop's meter accuracy (
        <a className="link" href="/settings/meters">
          meter profiles
        </a>
        ). Select a node to edit it; Shift-drag to select several; Ctrl+K or / finds a node.
      </p>
    </div>
  );
}
