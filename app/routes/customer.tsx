import { and, desc, eq } from "drizzle-orm";
import { data, Form, Link } from "react-router";
import { z } from "zod";
import { PageHeader } from "~/components/page-header";
import { JOB_STATE_LABELS } from "~/lib/job-states";
import { requireMember } from "~/server/auth.server";
import { eraseCustomer } from "~/server/customers.server";
import { db } from "~/server/db.server";
import { getCustomer } from "~/server/jobs.server";
import { jobs } from "~/server/schema.server";
import { redirectWithToast } from "~/server/toast.server";
import type { Route } from "./+types/customer";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { shop } = await requireMember(request, { permission: "manage:customers" });
  const customer = await getCustomer(shop.id, params.customerId);
  if (!customer) throw new Response("That customer was not found in your shop.", { status: 404 });
  const jobList = await db
    .select({ id: jobs.id, number: jobs.number, state: jobs.state, createdAt: jobs.createdAt })
    .from(jobs)
    .where(and(eq(jobs.shopId, shop.id), eq(jobs.customerId, customer.id)))
    .orderBy(desc(jobs.number))
    .all();
  return {
    customer: {
      id: customer.id,
      name: customer.name,
      email: customer.email,
      phone: customer.phone,
      consentToContact: customer.consentToContact,
      erasedAt: customer.erasedAt?.getTime() ?? null,
    },
    jobs: jobList.map((j) => ({ ...j, createdAt: j.createdAt.getTime() })),
    retentionDays: shop.retentionDays,
  };
}

const EraseSchema = z.object({
  intent: z.literal("erase", { error: "Unknown action." }),
  confirm: z
    .string({ error: "Type ERASE to confirm. Nothing was changed." })
    .trim()
    .refine((v) => v === "ERASE", "Type ERASE to confirm. Nothing was changed."),
});

export async function action({ request, params }: Route.ActionArgs) {
  const { shop, user } = await requireMember(request, { permission: "manage:customers" });
  const customer = await getCustomer(shop.id, params.customerId);
  if (!customer) throw new Response("That customer was not found in your shop.", { status: 404 });
  const parsed = EraseSchema.safeParse(Object.fromEntries(await request.formData()));
  if (!parsed.success) return data({ message: parsed.error.issues[0].message }, { status: 400 });
  await eraseCustomer(shop.id, customer.id, user.id);
  return redirectWithToast(`/customers/${customer.id}`, {
    kind: "success",
    message: "The customer's personal data was erased. Their jobs keep numbers and totals only.",
  });
}

export default function CustomerRoute({ loaderData, actionData }: Route.ComponentProps) {
  const { customer, jobs: jobList, retentionDays } = loaderData;
  return (
    <>
      <PageHeader title={customer.name} subtitle="What the shop holds about this customer." />
      <div className="grid gap-6 lg:grid-cols-2">
        <section className="card text-sm">
          <p>E-mail: {customer.email ?? "—"}</p>
          <p>Phone: {customer.phone ?? "—"}</p>
          <p>{customer.consentToContact ? "Agreed to be contacted" : "Did not agree to be contacted"}</p>
          {customer.erasedAt ? (
            <p className="mt-2 font-medium">
              Erased on {new Date(customer.erasedAt).toISOString().slice(0, 10)}.
            </p>
          ) : null}
          <h2 className="mt-4 font-semibold">Jobs</h2>
          <ul>
            {jobList.map((j) => (
              <li key={j.id}>
                <Link className="link" to={`/jobs/${j.id}`}>
                  #{j.number}
                </Link>{" "}
                · {JOB_STATE_LABELS[j.state]} · {new Date(j.createdAt).toISOString().slice(0, 10)}
              </li>
            ))}
          </ul>
          <p className="mt-4 text-muted">
            Closed jobs lose their personal data automatically {retentionDays} days after closing.
          </p>
        </section>
        <section className="card flex flex-col gap-4">
          <div>
            <h2 className="font-semibold">Export</h2>
            <p className="text-sm text-muted">Everything held about this customer and their jobs, as JSON.</p>
            <a className="btn mt-2" href={`/customers/${customer.id}/export`} download>
              Download export
            </a>
          </div>
          {!customer.erasedAt ? (
            <Form method="post" className="flex flex-col gap-2 border-t border-line pt-4">
              <h2 className="font-semibold">Erase</h2>
              <p className="text-sm text-muted">
                Removes the name, contact details, device serials, complaints, notes, photos and passcodes.
                Job numbers, states and money stay so the shop's totals remain right. This cannot be undone.
              </p>
              <input type="hidden" name="intent" value="erase" />
              <label htmlFor="confirm" className="text-sm font-medium">
                Type ERASE to confirm
              </label>
              <input id="confirm" name="confirm" className="field-input w-40" autoComplete="off" />
              {actionData?.message ? (
                <p role="alert" className="text-sm text-bad">
                  {actionData.message}
                </p>
              ) : null}
              <button type="submit" className="btn btn-danger self-start">
                Erase personal data
              </button>
            </Form>
          ) : null}
        </section>
      </div>
    </>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Customer · Railwise" }];
