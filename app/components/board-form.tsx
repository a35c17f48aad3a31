import { getFormProps, getSelectProps, type SubmissionResult, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { useState } from "react";
import { Form } from "react-router";
import { Field, FieldErrors } from "~/components/field";
import { fullChargeVolts } from "~/lib/battery";
import { BoardFormSchema, INPUT_LABEL, INPUT_TYPES } from "~/lib/board-schemas";

type Defaults = {
  maker: string;
  model: string;
  boardNumber: string;
  revision: string;
  inputType: (typeof INPUT_TYPES)[number];
  inputVolts: string;
  batteryCells: string;
  notes: string;
};

/** Create and edit share one form; the full-charge voltage updates as the cell count is typed. */
export function BoardFormFields({
  id,
  intent,
  lastResult,
  defaults,
  submitLabel,
}: {
  id: string;
  intent: string;
  lastResult?: SubmissionResult<string[]> | null;
  defaults?: Defaults;
  submitLabel: string;
}) {
  const [form, fields] = useForm({
    id,
    lastResult: lastResult ?? undefined,
    defaultValue: defaults ?? { inputType: "usb-c-pd", batteryCells: "0", revision: "" },
    onValidate: ({ formData }) => parseWithZod(formData, { schema: BoardFormSchema }),
    shouldValidate: "onBlur",
    shouldRevalidate: "onInput",
  });
  const [cells, setCells] = useState(defaults?.batteryCells ?? "0");
  const full = fullChargeVolts(Number(cells));
  return (
    <Form method="post" {...getFormProps(form)} className="grid gap-3 sm:grid-cols-2">
      <input type="hidden" name="intent" value={intent} />
      <Field label="Maker" meta={fields.maker} />
      <Field label="Model" meta={fields.model} />
      <Field label="Board number" meta={fields.boardNumber} />
      <Field label="Revision" meta={fields.revision} hint="optional, e.g. C" />
      <div className="flex flex-col gap-1">
        <label htmlFor={fields.inputType.id} className="text-sm font-medium">
          Input type
        </label>
        <select {...getSelectProps(fields.inputType)} key={fields.inputType.key} className="field-input">
          {INPUT_TYPES.map((t) => (
            <option key={t} value={t}>
              {INPUT_LABEL[t]}
            </option>
          ))}
        </select>
        <FieldErrors id={fields.inputType.errorId} errors={fields.inputType.errors} />
      </div>
      <Field label="Input voltage" meta={fields.inputVolts} hint="e.g. 20V or 19.5 V" />
      <div className="flex flex-col gap-1">
        <label htmlFor={fields.batteryCells.id} className="text-sm font-medium">
          Battery cells in series
        </label>
        <input
          id={fields.batteryCells.id}
          name={fields.batteryCells.name}
          key={fields.batteryCells.key}
          defaultValue={fields.batteryCells.initialValue as string | undefined}
          aria-invalid={fields.batteryCells.errors ? true : undefined}
          aria-describedby={`${fields.batteryCells.id}-full`}
          inputMode="numeric"
          className="field-input"
          onChange={(e) => setCells(e.target.value)}
        />
        <p id={`${fields.batteryCells.id}-full`} className="text-xs text-muted" aria-live="polite">
          {full
            ? `Full charge ${full.toFixed(1)} V at 4.2 V per Li-ion cell.`
            : "0 for a board without a battery."}
        </p>
        <FieldErrors id={fields.batteryCells.errorId} errors={fields.batteryCells.errors} />
      </div>
      <div className="flex flex-col gap-1 sm:col-span-2">
        <label htmlFor={fields.notes.id} className="text-sm font-medium">
          Notes
        </label>
        <textarea
          id={fields.notes.id}
          name={fields.notes.name}
          defaultValue={fields.notes.initialValue as string | undefined}
          rows={2}
          className="field-input"
        />
      </div>
      <FieldErrors id={form.errorId} errors={form.errors} />
      <div className="sm:col-span-2">
        <button type="submit" className="btn btn-primary">
          {submitLabel}
        </button>
      </div>
    </Form>
  );
}
