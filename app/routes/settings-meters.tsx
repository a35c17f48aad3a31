import { getFormProps, getTextareaProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { and, asc, eq } from "drizzle-orm";
import { data, Form, Link } from "react-router";
import { z } from "zod";
import { Field, FieldErrors } from "~/components/field";
import { PageHeader } from "~/components/page-header";
import { type MeterProfile, MeterProfileSchema } from "~/lib/engine";
import { MeterProfileFormSchema, rangesToLines, toProfile } from "~/lib/meter-profile-form";
import { audit } from "~/server/audit.server";
import { notFound, requireMember } from "~/server/auth.server";
import { db } from "~/server/db.server";
import { newId } from "~/server/ids.server";
import { meterProfiles } from "~/server/schema.server";
import { redirectWithToast } from "~/server/toast.server";
import type { Route } from "./+types/settings-meters";

export async function loader({ request }: Route.LoaderArgs) {
  const { shop } = await requireMember(request, { permission: "edit:meters" });
  const rows = await db
    .select()
    .from(meterProfiles)
    .where(eq(meterProfiles.shopId, shop.id))
    .orderBy(asc(meterProfiles.name))
    .all();
  const editId = new URL(request.url).searchParams.get("edit");
  const profiles = rows.map((r) => {
    const p = MeterProfileSchema.safeParse(r.profile);
    return {
      id: r.id,
      name: r.name,
      isDefault: r.isDefault,
      profile: (p.success ? p.data : {}) as MeterProfile,
    };
  });
  const editing = editId ? profiles.find((p) => p.id === editId) : undefined;
  if (editId && !editing) notFound("That meter profile");
  return { profiles, editing: editing ?? null };
}

const DeleteSchema = z.object({ intent: z.literal("delete"), id: z.string().min(1).max(40) });

export async function action({ request }: Route.ActionArgs) {
  const { shop, user } = await requireMember(request, { permission: "edit:meters" });
  const formData = await request.formData();
  if (formData.get("intent") === "delete") {
    const v = DeleteSchema.safeParse(Object.fromEntries(formData));
    if (!v.success) return data({ result: null }, { status: 400 });
    const gone = await db
      .delete(meterProfiles)
      .where(and(eq(meterProfiles.id, v.data.id), eq(meterProfiles.shopId, shop.id)))
      .returning({ id: meterProfiles.id });
    if (!gone.length) notFound("That meter profile");
    await audit({ shopId: shop.id, actorId: user.id, action: "meter.deleted", subject: v.data.id });
    return redirectWithToast("/settings/meters", { kind: "success", message: "Meter profile deleted." });
  }
  const submission = parseWithZod(formData, { schema: MeterProfileFormSchema });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  const v = submission.value;
  const profile = toProfile(v);
  if (!profile.voltage && !profile.resistance && !profile.diode)
    return data(
      {
        result: submission.reply({
          formErrors: ["Give at least one range for voltage, resistance or diode mode."],
        }),
      },
      { status: 400 },
    );
  const now = new Date();
  // One default meter per shop: clearing the others (a no-op unless this one becomes the default) and
  // writing this one go in one batch.
  const clearDefault = db
    .update(meterProfiles)
    .set({ isDefault: false })
    .where(and(eq(meterProfiles.shopId, shop.id), eq(meterProfiles.isDefault, v.isDefault)));
  let id = v.id;
  if (id) {
    const existing = await db
      .select({ id: meterProfiles.id })
      .from(meterProfiles)
      .where(and(eq(meterProfiles.id, id), eq(meterProfiles.shopId, shop.id)))
      .get();
    if (!existing) notFound("That meter profile");
    await db.batch([
      clearDefault,
      db
        .update(meterProfiles)
        .set({ name: v.name, profile, isDefault: v.isDefault, updatedBy: user.id, updatedAt: now })
        .where(and(eq(meterProfiles.id, id), eq(meterProfiles.shopId, shop.id))),
    ]);
  } else {
    id = newId();
    const values = {
      id,
      shopId: shop.id,
      name: v.name,
      profile,
      isDefault: v.isDefault,
      updatedBy: user.id,
      updatedAt: now,
    };
    await db.batch([clearDefault, db.insert(meterProfiles).values(values)]);
  }
  await audit({ shopId: shop.id, actorId: user.id, action: "meter.saved", subject: id });
  return redirectWithToast("/settings/meters", { kind: "success", message: `Saved ${v.name}.` });
}

export default function SettingsMetersRoute({ loaderData, actionData }: Route.ComponentProps) {
  const { profiles, editing } = loaderData;
  const [form, fields] = useForm({
    id: `meter-${editing?.id ?? "new"}`,
    lastResult: actionData?.result ?? undefined,
    defaultValue: editing
      ? {
          id: editing.id,
          name: editing.name,
          voltage: rangesToLines(editing.profile.voltage),
          resistance: rangesToLines(editing.profile.resistance),
          diode: rangesToLines(editing.profile.diode),
          isDefault: editing.isDefault ? "on" : undefined,
        }
      : undefined,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: MeterProfileFormSchema }),
    shouldValidate: "onBlur",
  });
  return (
    <>
      <PageHeader
        title="Meter profiles"
        subtitle="Your shop's multimeters and their stated accuracy; readings are judged with this margin."
      />
      <div className="grid gap-6 lg:grid-cols-2">
        <section className="card">
          <h2 className="mb-3 font-semibold">Meters</h2>
          {profiles.length === 0 ? <p className="text-sm text-muted">No meter profiles yet.</p> : null}
          <ul className="flex flex-col gap-3 text-sm">
            {profiles.map((p) => (
              <li key={p.id} className="border-b border-line pb-2">
                <div className="flex items-center gap-2">
                  <span className="font-medium">{p.name}</span>
                  {p.isDefault ? (
                    <span className="rounded bg-ok-soft px-1 text-xs text-ok">default</span>
                  ) : null}
                  <Link className="link ml-auto" to={`/settings/meters?edit=${p.id}`}>
                    Edit
                  </Link>
                  <Form method="post">
                    <input type="hidden" name="intent" value="delete" />
                    <input type="hidden" name="id" value={p.id} />
                    <button type="submit" className="btn btn-danger min-h-0 px-2 py-0.5 text-xs">
                      Delete
                    </button>
                  </Form>
                </div>
                <p className="font-mono text-xs text-muted">
                  {(["voltage", "resistance", "diode"] as const)
                    .filter((m) => p.profile[m]?.length)
                    .map((m) => `${m}: ${p.profile[m]!.length} range${p.profile[m]!.length === 1 ? "" : "s"}`)
                    .join(" · ")}
                </p>
              </li>
            ))}
          </ul>
        </section>
        <section className="card">
          <h2 className="mb-1 font-semibold">{editing ? `Edit ${editing.name}` : "Add a meter"}</h2>
          <p className="mb-3 text-xs text-muted">
            One range per line, as the meter's manual states its accuracy: full scale, resolution, % of
            reading, counts. Example for ±(0.5 % + 2) on the 6 V range:{" "}
            <span className="font-mono">6V, 1mV, 0.5, 2</span>
          </p>
          <Form
            method="post"
            {...getFormProps(form)}
            className="flex flex-col gap-3"
            key={editing?.id ?? "new"}
          >
            {editing ? <input type="hidden" name="id" value={editing.id} /> : null}
            <Field label="Name" meta={fields.name} />
            {(
              [
                ["voltage", "Voltage ranges", "6V, 1mV, 0.5, 2"],
                ["resistance", "Resistance ranges", "600R, 0.1R, 0.9, 5"],
                ["diode", "Diode ranges", "3V, 1mV, 1.5, 3"],
              ] as const
            ).map(([name, label, example]) => (
              <div key={name} className="flex flex-col gap-1">
                <label htmlFor={fields[name].id} className="text-sm font-medium">
                  {label}
                </label>
                <textarea
                  {...getTextareaProps(fields[name])}
                  key={fields[name].key}
                  rows={3}
                  className="field-input font-mono text-sm"
                  placeholder={`e.g. ${example}`}
                />
                <FieldErrors id={fields[name].errorId} errors={fields[name].errors} />
              </div>
            ))}
            <label className="flex items-center gap-2 text-sm">
              <input type="checkbox" name="isDefault" defaultChecked={editing?.isDefault ?? false} />
              Default meter for new runs
            </label>
            <FieldErrors id={form.errorId} errors={form.errors} />
            <div className="flex gap-2">
              <button type="submit" className="btn btn-primary">
                Save meter
              </button>
              {editing ? (
                <Link className="btn" to="/settings/meters">
                  Cancel
                </Link>
              ) : null}
            </div>
          </Form>
        </section>
      </div>
    </>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Meter profiles · Railwise" }];
