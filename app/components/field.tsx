import type { FieldMetadata } from "@conform-to/react";
import { getInputProps } from "@conform-to/react";

type InputType = "text" | "email" | "password" | "number" | "tel" | "url" | "search";

/** A labelled input with its errors beside it; the id ties label, input and message together for screen readers. */
export function Field({
  label,
  meta,
  type = "text",
  hint,
  autoComplete,
  autoFocus,
}: {
  label: string;
  // biome-ignore lint/suspicious/noExplicitAny: Conform field metadata of any string-like field
  meta: FieldMetadata<any, any, any>;
  type?: InputType;
  hint?: string;
  autoComplete?: string;
  autoFocus?: boolean;
}) {
  const props = getInputProps(meta, { type, ariaDescribedBy: hint ? `${meta.id}-hint` : undefined });
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={meta.id} className="text-sm font-medium">
        {label}
      </label>
      <input
        {...props}
        key={props.key}
        className="field-input"
        autoComplete={autoComplete}
        autoFocus={autoFocus}
      />
      {hint ? (
        <p id={`${meta.id}-hint`} className="text-muted text-xs">
          {hint}
        </p>
      ) : null}
      <FieldErrors id={meta.errorId} errors={meta.errors} />
    </div>
  );
}

export function FieldErrors({ id, errors }: { id?: string; errors?: string[] }) {
  if (!errors?.length) return null;
  return (
    <ul id={id} className="text-bad text-sm">
      {errors.map((e) => (
        <li key={e}>{e}</li>
      ))}
    </ul>
  );
}

/** Bots fill every field; people never see this one. */
export function Honeypot() {
  return (
    <div aria-hidden="true" className="absolute -left-[9999px] h-0 w-0 overflow-hidden">
      <label>
        Leave this empty
        <input type="text" name="website" tabIndex={-1} autoComplete="off" defaultValue="" />
      </label>
    </div>
  );
}
