import { getFormProps, getSelectProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { and, eq, ne } from "drizzle-orm";
import { data, Form, Link, useNavigation } from "react-router";
import { Field, FieldErrors } from "~/components/field";
import { PageHeader } from "~/components/page-header";
import {
  ChangeRoleSchema,
  InviteSchema,
  RemoveMemberSchema,
  ROLE_VALUES,
  ShopSchema,
} from "~/lib/auth-schemas";
import { can, ROLE_LABELS } from "~/lib/permissions";
import { bpToPercent, CURRENCIES, LIMITS, ShopTermsSchema } from "~/lib/shop-settings";
import { createEmailToken } from "~/server/accounts.server";
import { audit } from "~/server/audit.server";
import { requireMember } from "~/server/auth.server";
import { db } from "~/server/db.server";
import { appUrl, sendEmail } from "~/server/email.server";
import { changeMember, listMembers, listPendingInvites } from "~/server/members.server";
import { jobs, shops } from "~/server/schema.server";
import { redirectWithToast } from "~/server/toast.server";
import type { Route } from "./+types/settings";

export async function loader({ request }: Route.LoaderArgs) {
  const { shop, user, role } = await requireMember(request, { permission: "manage:shop" });
  const [memberList, invites] = await Promise.all([listMembers(shop.id), listPendingInvites(shop.id)]);
  return {
    shop: {
      id: shop.id,
      name: shop.name,
      currency: shop.currency,
      taxPercent: bpToPercent(shop.taxRateBp),
      warrantyDays: shop.warrantyDays,
      retentionDays: shop.retentionDays,
      unclaimedDays: shop.unclaimedDays,
    },
    members: memberList,
    invites,
    me: user.id,
    links: { meters: can(role, "edit:meters"), tokens: can(role, "manage:own-tokens") },
  };
}

const TERM_COLUMNS = ["taxRateBp", "currency", "warrantyDays", "retentionDays", "unclaimedDays"] as const;

export async function action({ request }: Route.ActionArgs) {
  const { shop, user } = await requireMember(request, { permission: "manage:shop" });
  const formData = await request.formData();
  const intent = formData.get("intent");

  if (intent === "shop") {
    const submission = parseWithZod(formData, { schema: ShopSchema });
    if (submission.status !== "success") return data({ intent, result: submission.reply() }, { status: 400 });
    await db.update(shops).set({ name: submission.value.name }).where(eq(shops.id, shop.id));
    await audit({
      shopId: shop.id,
      actorId: user.id,
      action: "shop.renamed",
      data: { name: submission.value.name },
    });
    return redirectWithToast("/settings", { kind: "success", message: "Shop name saved." });
  }

  if (intent === "shop-terms") {
    const submission = parseWithZod(formData, { schema: ShopTermsSchema });
    if (submission.status !== "success") return data({ intent, result: submission.reply() }, { status: 400 });
    const { taxPercent, currency, warrantyDays, retentionDays, unclaimedDays } = submission.value;
    const next = { taxRateBp: taxPercent, currency, warrantyDays, retentionDays, unclaimedDays };
    const changes: Record<string, { from: string | number; to: string | number }> = {};
    for (const key of TERM_COLUMNS) {
      if (shop[key] !== next[key]) changes[key] = { from: shop[key], to: next[key] };
    }
    if (!Object.keys(changes).length) {
      return redirectWithToast("/settings", { kind: "info", message: "Nothing changed." });
    }
    // Open jobs carry fees and quotes in the old currency's minor units; switching under them would misstate them.
    if (changes.currency) {
      const open = await db
        .select({ id: jobs.id })
        .from(jobs)
        .where(and(eq(jobs.shopId, shop.id), ne(jobs.state, "closed")))
        .all();
      if (open.length) {
        return data(
          {
            intent,
            result: submission.reply({
              fieldErrors: {
                currency: [
                  `${open.length} open job${open.length === 1 ? " is" : "s are"} billed in ${shop.currency}. Close ${open.length === 1 ? "it" : "them"} before changing the currency.`,
                ],
              },
            }),
          },
          { status: 409 },
        );
      }
    }
    await db.batch([
      db.update(shops).set(next).where(eq(shops.id, shop.id)),
      audit({ shopId: shop.id, actorId: user.id, action: "shop.terms-changed", data: changes }),
    ]);
    return redirectWithToast("/settings", { kind: "success", message: "Money and terms saved." });
  }

  if (intent === "invite") {
    const submission = parseWithZod(formData, { schema: InviteSchema });
    if (submission.status !== "success") return data({ intent, result: submission.reply() }, { status: 400 });
    const { email, role } = submission.value;
    if ((await listMembers(shop.id)).some((m) => m.email === email)) {
      return data(
        {
          intent,
          result: submission.reply({
            fieldErrors: { email: ["That person is already a member of this shop."] },
          }),
        },
        { status: 400 },
      );
    }
    const token = await createEmailToken({
      purpose: "invite",
      email,
      shopId: shop.id,
      role,
      createdBy: user.id,
    });
    await sendEmail({
      to: email,
      subject: `${user.name} invited you to ${shop.name} on Railwise`,
      text: `${user.name} invited you to join ${shop.name} on Railwise as ${ROLE_LABELS[role]}.\n\nAccept the invitation (valid for 7 days, works once):\n${appUrl(request, `/invite/${token}`)}\n`,
    });
    await audit({ shopId: shop.id, actorId: user.id, action: "member.invited", data: { email, role } });
    return redirectWithToast("/settings", { kind: "success", message: `Invitation sent to ${email}.` });
  }

  if (intent === "change-role" || intent === "remove-member") {
    const schema = intent === "change-role" ? ChangeRoleSchema : RemoveMemberSchema;
    const submission = parseWithZod(formData, { schema });
    if (submission.status !== "success") return data({ intent, result: submission.reply() }, { status: 400 });
    const v = submission.value as { memberId: string; role?: (typeof ROLE_VALUES)[number] };
    const result = await changeMember(
      shop.id,
      v.memberId,
      intent === "change-role" ? { role: v.role! } : { remove: true },
    );
    if (!result.ok)
      return data(
        { intent, result: submission.reply({ formErrors: [result.message] }) },
        { status: result.status },
      );
    await audit({
      shopId: shop.id,
      actorId: user.id,
      action: intent === "change-role" ? "member.role-changed" : "member.removed",
      subject: v.memberId,
      data: { role: v.role },
    });
    return redirectWithToast("/settings", {
      kind: "success",
      message: intent === "change-role" ? "Role changed." : "Member removed.",
    });
  }

  return data({ intent: null, result: null }, { status: 400 });
}

export default function SettingsRoute({ loaderData, actionData }: Route.ComponentProps) {
  const { shop, members, invites, me, links } = loaderData;
  const navigation = useNavigation();
  const [termsForm, termsFields] = useForm({
    id: "shop-terms",
    lastResult: actionData?.intent === "shop-terms" ? actionData.result : undefined,
    defaultValue: {
      taxPercent: shop.taxPercent,
      currency: shop.currency,
      warrantyDays: String(shop.warrantyDays),
      retentionDays: String(shop.retentionDays),
      unclaimedDays: String(shop.unclaimedDays),
    },
    shouldValidate: "onBlur",
    onValidate: ({ formData }) => parseWithZod(formData, { schema: ShopTermsSchema }),
  });
  const [shopForm, shopFields] = useForm({
    id: "shop",
    lastResult: actionData?.intent === "shop" ? actionData.result : undefined,
    defaultValue: { name: shop.name },
    onValidate: ({ formData }) => parseWithZod(formData, { schema: ShopSchema }),
  });
  const [inviteForm, inviteFields] = useForm({
    id: "invite",
    lastResult: actionData?.intent === "invite" ? actionData.result : undefined,
    defaultValue: { role: "tech" },
    onValidate: ({ formData }) => parseWithZod(formData, { schema: InviteSchema }),
  });
  const memberError =
    actionData?.intent === "change-role" || actionData?.intent === "remove-member"
      ? (actionData.result?.error?.[""] as string[] | undefined)
      : undefined;
  return (
    <>
      <PageHeader
        title="Shop settings"
        subtitle="Your shop's name, money and terms, and who works in it."
        actions={
          <>
            {links.meters ? (
              <Link to="/settings/meters" className="btn">
                Meter profiles
              </Link>
            ) : null}
            {links.tokens ? (
              <Link to="/settings/tokens" className="btn">
                API tokens
              </Link>
            ) : null}
          </>
        }
      />
      <div className="grid items-start gap-6 lg:grid-cols-2">
        <div className="flex flex-col gap-6">
          <section className="card">
            <h2 className="mb-3 font-semibold">Shop</h2>
            <Form method="post" {...getFormProps(shopForm)} className="flex flex-col gap-3">
              <input type="hidden" name="intent" value="shop" />
              <Field label="Shop name" meta={shopFields.name} />
              <button type="submit" className="btn self-start">
                Save name
              </button>
            </Form>
          </section>
          <section className="card">
            <h2 className="mb-3 font-semibold">Invite a member</h2>
            <Form method="post" {...getFormProps(inviteForm)} className="flex flex-col gap-3">
              <input type="hidden" name="intent" value="invite" />
              <Field label="E-mail" meta={inviteFields.email} type="email" />
              <div className="flex flex-col gap-1">
                <label htmlFor={inviteFields.role.id} className="text-sm font-medium">
                  Role
                </label>
                <select {...getSelectProps(inviteFields.role)} className="field-input">
                  {ROLE_VALUES.map((r) => (
                    <option key={r} value={r}>
                      {ROLE_LABELS[r]}
                    </option>
                  ))}
                </select>
                <FieldErrors id={inviteFields.role.errorId} errors={inviteFields.role.errors} />
              </div>
              <button
                type="submit"
                className="btn btn-primary self-start"
                disabled={navigation.state === "submitting"}
              >
                Send invitation
              </button>
            </Form>
            {invites.length ? (
              <div className="mt-4">
                <h3 className="mb-1 text-sm font-medium">Waiting for an answer</h3>
                <ul className="text-sm text-muted">
                  {invites.map((i) => (
                    <li key={i.id}>
                      {i.email} · {i.role ? ROLE_LABELS[i.role] : ""} · until{" "}
                      {new Date(i.expiresAt).toLocaleDateString()}
                    </li>
                  ))}
                </ul>
              </div>
            ) : null}
          </section>
        </div>
        <section className="card" aria-labelledby="terms-h">
          <h2 id="terms-h" className="mb-1 font-semibold">
            Money and terms
          </h2>
          <p className="mb-3 text-sm text-muted">
            New quotes use this tax rate and currency; quotes and invoices already written keep theirs.
          </p>
          <Form method="post" {...getFormProps(termsForm)} className="flex flex-col gap-3">
            <input type="hidden" name="intent" value="shop-terms" />
            <div className="grid gap-3 sm:grid-cols-2">
              <Field
                label="Tax rate (%)"
                meta={termsFields.taxPercent}
                hint={`Added on a quote's subtotal; 0 to ${LIMITS.taxBp.max / 100}, up to two decimals (8.25).`}
              />
              <div className="flex flex-col gap-1">
                <label htmlFor={termsFields.currency.id} className="text-sm font-medium">
                  Currency
                </label>
                <select {...getSelectProps(termsFields.currency)} className="field-input">
                  {CURRENCIES.map(([code, label]) => (
                    <option key={code} value={code}>
                      {code} · {label}
                    </option>
                  ))}
                </select>
                <FieldErrors id={termsFields.currency.errorId} errors={termsFields.currency.errors} />
              </div>
              <Field
                label="Warranty on repairs (days)"
                meta={termsFields.warrantyDays}
                type="number"
                hint={`A comeback within this time is free; ${LIMITS.warrantyDays.min} to ${LIMITS.warrantyDays.max}.`}
              />
              <Field
                label="Unclaimed devices kept (days)"
                meta={termsFields.unclaimedDays}
                type="number"
                hint={`Promised in the intake terms of new jobs; ${LIMITS.unclaimedDays.min} to ${LIMITS.unclaimedDays.max}.`}
              />
              <Field
                label="Personal data kept after closing (days)"
                meta={termsFields.retentionDays}
                type="number"
                hint={`Then erased by the daily task; ${LIMITS.retentionDays.min} to ${LIMITS.retentionDays.max}, and not shorter than the warranty.`}
              />
            </div>
            <FieldErrors id={termsForm.errorId} errors={termsForm.errors} />
            <button type="submit" className="btn btn-primary self-start">
              Save money and terms
            </button>
          </Form>
        </section>
      </div>
      <section className="card mt-6">
        <h2 className="mb-3 font-semibold">Members</h2>
        {memberError?.length ? (
          <p role="alert" className="mb-3 rounded-md border border-bad bg-bad-soft px-3 py-2 text-sm">
            {memberError.join(" ")}
          </p>
        ) : null}
        <div className="overflow-x-auto">
          <table className="w-full text-left text-sm">
            <thead className="text-muted">
              <tr>
                <th className="py-2 font-medium">Name</th>
                <th className="py-2 font-medium">E-mail</th>
                <th className="py-2 font-medium">Role</th>
                <th className="py-2 font-medium">
                  <span className="sr-only">Actions</span>
                </th>
              </tr>
            </thead>
            <tbody>
              {members.map((m) => (
                <MemberRow key={m.id} member={m} isMe={m.userId === me} />
              ))}
            </tbody>
          </table>
        </div>
      </section>
    </>
  );
}

function MemberRow({
  member,
  isMe,
}: {
  member: { id: string; name: string; email: string; role: (typeof ROLE_VALUES)[number] };
  isMe: boolean;
}) {
  return (
    <tr className="border-t border-line">
      <td className="py-2">
        {member.name}
        {isMe ? <span className="text-muted"> (you)</span> : null}
      </td>
      <td className="py-2">{member.email}</td>
      <td className="py-2">
        <Form method="post" className="flex items-center gap-2">
          <input type="hidden" name="intent" value="change-role" />
          <input type="hidden" name="memberId" value={member.id} />
          <label className="sr-only" htmlFor={`role-${member.id}`}>
            Role of {member.name}
          </label>
          <select
            id={`role-${member.id}`}
            name="role"
            defaultValue={member.role}
            className="field-input py-1"
          >
            {ROLE_VALUES.map((r) => (
              <option key={r} value={r}>
                {ROLE_LABELS[r]}
              </option>
            ))}
          </select>
          <button type="submit" className="btn px-3 py-1">
            Change
          </button>
        </Form>
      </td>
      <td className="py-2 text-right">
        <Form
          method="post"
          onSubmit={(e) => {
            if (!confirm(`Remove ${member.name} from the shop?`)) e.preventDefault();
          }}
        >
          <input type="hidden" name="intent" value="remove-member" />
          <input type="hidden" name="memberId" value={member.id} />
          <button type="submit" className="btn btn-danger px-3 py-1">
            Remove
          </button>
        </Form>
      </td>
    </tr>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Shop settings · Railwise" }];
