import { getFormProps, getInputProps, getSelectProps, getTextareaProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { MaxFileSizeExceededError, MaxFilesExceededError, parseFormData } from "@remix-run/form-data-parser";
import { and, asc, eq, isNull } from "drizzle-orm";
import { data, Form, Link, useNavigation } from "react-router";
import { z } from "zod";
import { Field, FieldErrors } from "~/components/field";
import { PageHeader } from "~/components/page-header";
import { PHOTO_MAX_BYTES, PHOTO_MAX_FILES } from "~/lib/customer-updates";
import { intakeTerms } from "~/lib/intake-terms";
import { formatMoney, minorToInput, parseMoney } from "~/lib/money";
import { requireMember } from "~/server/auth.server";
import { sendStatusUpdate } from "~/server/customer-email.server";
import { db } from "~/server/db.server";
import { storeJobPhoto } from "~/server/job-photos.server";
import { checkPhoto } from "~/server/photos.server";
import { createJob, getCustomer, getJob, warrantyCovers } from "~/server/jobs.server";
import { boards, customers } from "~/server/schema.server";
import { redirectWithToast } from "~/server/toast.server";
import type { Route } from "./+types/job-new";

const DEFAULT_FEE_MINOR = 4500;

export async function loader({ request }: Route.LoaderArgs) {
  const { shop } = await requireMember(request, { permission: "edit:jobs" });
  const url = new URL(request.url);
  const boardList = await db
    .select({
      id: boards.id,
      maker: boards.maker,
      model: boards.model,
      boardNumber: boards.boardNumber,
      revision: boards.revision,
    })
    .from(boards)
    .where(and(eq(boards.shopId, shop.id), isNull(boards.archivedAt)))
    .orderBy(asc(boards.maker), asc(boards.model))
    .all();
  const customerList = await db
    .select({ id: customers.id, name: customers.name, email: customers.email })
    .from(customers)
    .where(and(eq(customers.shopId, shop.id), isNull(customers.erasedAt)))
    .orderBy(asc(customers.name))
    .all();
  // A warranty comeback starts from the original job: same customer, board and serial.
  const warrantyOfId = url.searchParams.get("warrantyOf");
  let warranty: null | {
    id: string;
    number: number;
    covered: boolean;
    customerId: string | null;
    boardId: string | null;
    serial: string;
  } = null;
  if (warrantyOfId) {
    const original = await getJob(shop.id, warrantyOfId);
    if (original) {
      warranty = {
        id: original.id,
        number: original.number,
        covered: warrantyCovers(original, shop),
        customerId: original.customerId,
        boardId: original.boardId,
        serial: original.serial,
      };
    }
  }
  return {
    shop: { name: shop.name, currency: shop.currency, warrantyDays: shop.warrantyDays },
    boards: boardList,
    customers: customerList,
    warranty,
    defaultFee: minorToInput(DEFAULT_FEE_MINOR, shop.currency),
    terms: intakeTerms(shop.name, shop.unclaimedDays),
  };
}

const optionalText = (max: number) => z.string().trim().max(max, `At most ${max} characters.`).optional();

export const IntakeSchema = z
  .object({
    customerId: z.string().optional(),
    name: optionalText(120),
    email: z.email("Enter a valid e-mail address.").optional(),
    phone: optionalText(40),
    consentToContact: z.boolean().optional(),
    boardId: z.string().optional(),
    serial: z
      .string({ error: "Enter the serial number (or “none” if it has no label)." })
      .trim()
      .min(1)
      .max(80),
    conditionNotes: optionalText(2000),
    accessories: optionalText(500),
    complaint: z
      .string({ error: "Describe what the customer reports." })
      .trim()
      .min(3, "Describe what the customer reports.")
      .max(2000),
    diagnosticFee: z.string({ error: "Enter the agreed diagnostic fee (0 for none)." }),
    termsAccepted: z.boolean({
      error: "The customer must accept the shop's terms before we take the device.",
    }),
    passcode: z.string().max(64, "At most 64 characters.").optional(),
    notify: z.boolean().optional(),
    warrantyOf: z.string().optional(),
  })
  .superRefine((v, ctx) => {
    if (!v.customerId && !v.name)
      ctx.addIssue({ code: "custom", path: ["name"], message: "Enter the customer's name." });
    if (!v.customerId && !v.email && !v.phone) {
      ctx.addIssue({
        code: "custom",
        path: ["phone"],
        message: "Enter an e-mail address or a phone number.",
      });
    }
    if (v.termsAccepted !== true) {
      ctx.addIssue({
        code: "custom",
        path: ["termsAccepted"],
        message: "The customer must accept the shop's terms before we take the device.",
      });
    }
    const fee = parseMoney(v.diagnosticFee);
    if (!fee.ok) ctx.addIssue({ code: "custom", path: ["diagnosticFee"], message: fee.message });
  });

export async function action({ request }: Route.ActionArgs) {
  const { shop, user } = await requireMember(request, { permission: "edit:jobs" });
  let formData: FormData;
  try {
    formData = await parseFormData(
      request,
      { maxFileSize: PHOTO_MAX_BYTES, maxFiles: PHOTO_MAX_FILES },
      (f) => f,
    );
  } catch (error) {
    if (error instanceof MaxFileSizeExceededError || error instanceof MaxFilesExceededError) {
      return data(
        {
          result: {
            status: "error" as const,
            error: { photos: [`Up to ${PHOTO_MAX_FILES} photos of at most 8 MB each.`] },
          },
        },
        { status: 413 },
      );
    }
    throw error;
  }
  const submission = parseWithZod(formData, { schema: IntakeSchema });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  const v = submission.value;

  // Photos are checked before anything is written, so a bad file changes nothing.
  const files = formData.getAll("photos").filter((f): f is File => f instanceof File && f.size > 0);
  const photos = [];
  for (const f of files) {
    const checked = await checkPhoto(f);
    if (!checked.ok)
      return data(
        { result: submission.reply({ fieldErrors: { photos: [checked.message] } }) },
        { status: 400 },
      );
    photos.push(checked);
  }
  const refuse = (field: string, message: string) =>
    data({ result: submission.reply({ fieldErrors: { [field]: [message] } }) }, { status: 400 });

  let existing: Awaited<ReturnType<typeof getCustomer>>;
  if (v.customerId) {
    existing = await getCustomer(shop.id, v.customerId);
    if (!existing || existing.erasedAt) return refuse("customerId", "That customer is not in your shop.");
  }
  if (v.boardId) {
    const board = await db
      .select({ id: boards.id })
      .from(boards)
      .where(and(eq(boards.shopId, shop.id), eq(boards.id, v.boardId)))
      .get();
    if (!board) return refuse("boardId", "That board is not in your library.");
  }
  let chargeable = true;
  let warrantyOfJobId: string | null = null;
  if (v.warrantyOf) {
    const original = await getJob(shop.id, v.warrantyOf);
    if (!original) return refuse("warrantyOf", "The original job is not in your shop.");
    warrantyOfJobId = original.id;
    chargeable = !warrantyCovers(original, shop);
  }
  const fee = parseMoney(v.diagnosticFee, shop.currency);
  const job = await createJob(shop.id, user.id, {
    customer: existing
      ? { id: existing.id, name: existing.name, consentToContact: existing.consentToContact }
      : { name: v.name!, email: v.email, phone: v.phone, consentToContact: !!v.consentToContact },
    boardId: v.boardId || null,
    serial: v.serial,
    conditionNotes: v.conditionNotes ?? "",
    accessories: v.accessories ?? "",
    complaint: v.complaint,
    diagnosticFeeMinor: chargeable && fee.ok ? fee.minor : 0,
    unclaimedDays: shop.unclaimedDays,
    passcode: v.passcode || undefined,
    warrantyOfJobId,
    chargeable,
  });
  for (const p of photos) await storeJobPhoto(shop.id, job.id, user.id, p);

  let mailNote = "";
  if (v.notify) {
    const customer = (await getCustomer(shop.id, job.customerId))!;
    const board = v.boardId
      ? await db.select().from(boards).where(eq(boards.id, v.boardId)).get()
      : undefined;
    const sent = await sendStatusUpdate(
      "received",
      {
        shop,
        job: { id: job.id, number: job.number, device: board ? `${board.maker} ${board.model}` : "device" },
        customer,
      },
      user.id,
    );
    mailNote = sent.sent ? " The customer was e-mailed." : ` No e-mail sent: ${sent.reason}`;
  }
  return redirectWithToast(`/jobs/${job.id}`, {
    kind: "success",
    message: `Job #${job.number} opened${chargeable ? "" : " under warranty, free of charge"}.${mailNote}`,
  });
}

export default function JobNewRoute({ loaderData, actionData }: Route.ComponentProps) {
  const { shop, boards: boardList, customers: customerList, warranty, defaultFee, terms } = loaderData;
  const navigation = useNavigation();
  const [form, fields] = useForm({
    id: "intake",
    lastResult: actionData?.result,
    defaultValue: {
      diagnosticFee: warranty?.covered ? "0" : defaultFee,
      notify: "on",
      customerId: warranty?.customerId ?? "",
      boardId: warranty?.boardId ?? "",
      serial: warranty?.serial ?? "",
      warrantyOf: warranty?.id ?? "",
    },
    // Revalidate as the user types or ticks, so a fixed error disappears before the next click (no layout jump
    // under the pointer).
    shouldValidate: "onBlur",
    shouldRevalidate: "onInput",
    onValidate: ({ formData }) => parseWithZod(formData, { schema: IntakeSchema }),
  });
  const photoErrors = (actionData?.result as { error?: Record<string, string[]> } | undefined)?.error?.photos;
  return (
    <>
      <PageHeader
        title={warranty ? `Warranty comeback of job #${warranty.number}` : "Take in a device"}
        subtitle={
          warranty
            ? warranty.covered
              ? `Inside the ${shop.warrantyDays}-day warranty: this job is free of charge.`
              : `The original job closed more than ${shop.warrantyDays} days ago (or is still open): charged as usual.`
            : "The customer, the device as it arrived, and what was agreed."
        }
        actions={
          <Link to="/jobs" className="btn">
            Back to jobs
          </Link>
        }
      />
      <Form
        method="post"
        encType="multipart/form-data"
        {...getFormProps(form)}
        className="grid gap-6 lg:grid-cols-2"
      >
        <input {...getInputProps(fields.warrantyOf, { type: "hidden" })} />
        <section className="card flex flex-col gap-3">
          <h2 className="font-semibold">Customer</h2>
          {customerList.length ? (
            <div className="flex flex-col gap-1">
              <label htmlFor={fields.customerId.id} className="text-sm font-medium">
                Returning customer
              </label>
              <select {...getSelectProps(fields.customerId)} className="field-input">
                <option value="">New customer (enter below)</option>
                {customerList.map((c) => (
                  <option key={c.id} value={c.id}>
                    {c.name}
                    {c.email ? ` · ${c.email}` : ""}
                  </option>
                ))}
              </select>
              <FieldErrors id={fields.customerId.errorId} errors={fields.customerId.errors} />
            </div>
          ) : null}
          <Field label="Name" meta={fields.name} autoComplete="off" />
          <Field label="E-mail" meta={fields.email} type="email" autoComplete="off" />
          <Field label="Phone" meta={fields.phone} type="tel" autoComplete="off" />
          <Check
            meta={fields.consentToContact}
            label="The customer agrees to be contacted about this repair by e-mail"
          />
        </section>
        <section className="card flex flex-col gap-3">
          <h2 className="font-semibold">Device</h2>
          <div className="flex flex-col gap-1">
            <label htmlFor={fields.boardId.id} className="text-sm font-medium">
              Board
            </label>
            <select {...getSelectProps(fields.boardId)} className="field-input">
              <option value="">Not in the library yet</option>
              {boardList.map((b) => (
                <option key={b.id} value={b.id}>
                  {b.maker} {b.model} · {b.boardNumber}
                  {b.revision ? ` rev ${b.revision}` : ""}
                </option>
              ))}
            </select>
            <FieldErrors id={fields.boardId.errorId} errors={fields.boardId.errors} />
          </div>
          <Field label="Serial number" meta={fields.serial} autoComplete="off" />
          <TextArea
            label="Condition on arrival"
            meta={fields.conditionNotes}
            hint="Scratches, dents, liquid marks, missing screws."
          />
          <Field
            label="Accessories received"
            meta={fields.accessories}
            hint="e.g. charger, case; leave empty for none."
          />
          <div className="flex flex-col gap-1">
            <label htmlFor="photos" className="text-sm font-medium">
              Intake photos
            </label>
            <input
              id="photos"
              name="photos"
              type="file"
              accept="image/png,image/jpeg,image/webp"
              multiple
              className="field-input"
              aria-describedby="photos-hint"
            />
            <p id="photos-hint" className="text-xs text-muted">
              Up to {PHOTO_MAX_FILES} PNG, JPEG or WebP photos, 8 MB each.
            </p>
            <FieldErrors errors={photoErrors} />
          </div>
        </section>
        <section className="card flex flex-col gap-3">
          <h2 className="font-semibold">The repair</h2>
          <TextArea
            label="Complaint"
            meta={fields.complaint}
            hint="In the customer's words: what happens, since when, any liquid or drops."
          />
          <Field
            label={`Agreed diagnostic fee (${shop.currency})`}
            meta={fields.diagnosticFee}
            hint={`Before tax; e.g. ${formatMoney(4500, shop.currency)} is typed 45.00.`}
          />
          <Field
            label="Device passcode (optional)"
            meta={fields.passcode}
            type="password"
            autoComplete="off"
            hint="Sealed at rest, shown only to the assigned technician, erased when the job closes."
          />
        </section>
        <section className="card flex flex-col gap-3">
          <h2 className="font-semibold">Terms</h2>
          <ul className="list-disc space-y-1 pl-5 text-sm">
            {terms.map((t) => (
              <li key={t}>{t}</li>
            ))}
          </ul>
          <Check meta={fields.termsAccepted} label="The customer has read and accepts these terms" />
          <Check
            meta={fields.notify}
            label="E-mail the customer that we have the device (if they agreed to contact)"
          />
          <button
            type="submit"
            className="btn btn-primary self-start"
            disabled={navigation.state === "submitting"}
          >
            Open job
          </button>
        </section>
      </Form>
    </>
  );
}

function Check({
  meta,
  label,
}: {
  // biome-ignore lint/suspicious/noExplicitAny: Conform field metadata of a boolean field
  meta: any;
  label: string;
}) {
  const props = getInputProps(meta, { type: "checkbox" });
  return (
    <div className="flex flex-col gap-1">
      <label className="flex items-start gap-2 text-sm">
        <input {...props} key={props.key} className="mt-1 h-4 w-4" />
        <span>{label}</span>
      </label>
      <FieldErrors id={meta.errorId} errors={meta.errors} />
    </div>
  );
}

function TextArea({
  label,
  meta,
  hint,
}: {
  label: string;
  // biome-ignore lint/suspicious/noExplicitAny: Conform field metadata of a text field
  meta: any;
  hint?: string;
}) {
  const props = getTextareaProps(meta, { ariaDescribedBy: hint ? `${meta.id}-hint` : undefined });
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={meta.id} className="text-sm font-medium">
        {label}
      </label>
      <textarea {...props} key={props.key} rows={3} className="field-input" />
      {hint ? (
        <p id={`${meta.id}-hint`} className="text-xs text-muted">
          {hint}
        </p>
      ) : null}
      <FieldErrors id={meta.errorId} errors={meta.errors} />
    </div>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Take in a device · Railwise" }];
