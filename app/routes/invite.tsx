import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { eq } from "drizzle-orm";
import { data, Form, Link } from "react-router";
import { AuthCard } from "~/components/auth-card";
import { Field } from "~/components/field";
import { AcceptInviteSchema, newPasswordField } from "~/lib/auth-schemas";
import { ROLE_LABELS } from "~/lib/permissions";
import {
  checkCredentials,
  consumeToken,
  createUser,
  findLiveToken,
  findUserByEmail,
} from "~/server/accounts.server";
import { audit } from "~/server/audit.server";
import { db } from "~/server/db.server";
import { newId } from "~/server/ids.server";
import { members, shops } from "~/server/schema.server";
import { sessionCookie, startFreshSession } from "~/server/session.server";
import { clientAddress, describeWait, recordSignInFailure, signInWaitMs } from "~/server/throttle.server";
import { redirectWithToast } from "~/server/toast.server";
import type { Route } from "./+types/invite";

async function loadInvite(token: string) {
  const invite = await findLiveToken("invite", token);
  if (!invite?.shopId) return null;
  const shop = await db.select().from(shops).where(eq(shops.id, invite.shopId)).get();
  if (!shop) return null;
  return { invite, shop };
}

export async function loader({ params }: Route.LoaderArgs) {
  const found = await loadInvite(params.token);
  if (!found) return { valid: false as const };
  const existing = await findUserByEmail(found.invite.email);
  return {
    valid: true as const,
    shopName: found.shop.name,
    email: found.invite.email,
    role: found.invite.role ?? "tech",
    hasAccount: !!existing,
  };
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const submission = parseWithZod(await request.formData(), { schema: AcceptInviteSchema });
  if (submission.status !== "success")
    return data({ result: submission.reply({ hideFields: ["password"] }) }, { status: 400 });
  const found = await loadInvite(params.token);
  if (!found)
    return data(
      { result: submission.reply({ formErrors: ["This invitation has expired or was already used."] }) },
      { status: 400 },
    );
  const { invite, shop } = found;
  const existing = await findUserByEmail(invite.email);
  let userId: string;
  if (existing) {
    // The same throttle as the sign-in form: an invitation link must not become a password-guessing oracle.
    const address = clientAddress(request, context);
    const wait = await signInWaitMs(invite.email, address);
    if (wait > 0)
      return data({ result: submission.reply({ formErrors: [describeWait(wait)] }) }, { status: 429 });
    const ok = await checkCredentials(invite.email, submission.value.password);
    if (!ok) await recordSignInFailure(invite.email, address);
    if (!ok)
      return data(
        {
          result: submission.reply({
            fieldErrors: { password: ["That is not the password of this account."] },
            hideFields: ["password"],
          }),
        },
        { status: 400 },
      );
    userId = existing.id;
  } else {
    const pw = newPasswordField.safeParse(submission.value.password);
    const name = submission.value.name?.trim();
    const fieldErrors: Record<string, string[]> = {};
    if (!pw.success) fieldErrors.password = pw.error.issues.map((i) => i.message);
    if (!name) fieldErrors.name = ["Enter your name."];
    if (Object.keys(fieldErrors).length)
      return data({ result: submission.reply({ fieldErrors, hideFields: ["password"] }) }, { status: 400 });
    if (!(await consumeToken(invite.id)))
      return data(
        { result: submission.reply({ formErrors: ["This invitation was already used."] }) },
        { status: 400 },
      );
    userId = await createUser({ email: invite.email, name: name!, password: submission.value.password });
  }
  if (existing && !(await consumeToken(invite.id))) {
    return data(
      { result: submission.reply({ formErrors: ["This invitation was already used."] }) },
      { status: 400 },
    );
  }
  await db
    .insert(members)
    .values({ id: newId(), shopId: shop.id, userId, role: invite.role ?? "tech" })
    .onConflictDoNothing();
  await audit({
    shopId: shop.id,
    actorId: userId,
    action: "member.joined",
    subject: userId,
    data: { role: invite.role },
  });
  const { token } = await startFreshSession(request, userId, shop.id);
  return redirectWithToast(
    "/boards",
    { kind: "success", message: `You joined ${shop.name}.` },
    { headers: { "Set-Cookie": sessionCookie(token) } },
  );
}

export default function InviteRoute({ loaderData, actionData }: Route.ComponentProps) {
  const [form, fields] = useForm({ lastResult: actionData?.result });
  if (!loaderData.valid) {
    return (
      <AuthCard title="This invitation no longer works">
        <p className="text-sm">
          Invitations work once and expire after seven days. Ask your shop's owner to send a new one.
        </p>
        <Link className="link mt-4 inline-block" to="/login">
          Sign in
        </Link>
      </AuthCard>
    );
  }
  return (
    <AuthCard title={`Join ${loaderData.shopName}`}>
      <p className="mb-4 text-sm">
        You are invited as <strong>{ROLE_LABELS[loaderData.role]}</strong> with the address{" "}
        <strong>{loaderData.email}</strong>.
      </p>
      <Form method="post" {...getFormProps(form)} className="flex flex-col gap-4">
        {form.errors?.length ? (
          <p role="alert" className="text-bad text-sm">
            {form.errors.join(" ")}
          </p>
        ) : null}
        {loaderData.hasAccount ? (
          <Field
            label="Your current password"
            meta={fields.password}
            type="password"
            autoComplete="current-password"
            autoFocus
          />
        ) : (
          <>
            <Field label="Your name" meta={fields.name} autoComplete="name" autoFocus />
            <Field
              label="Choose a password"
              meta={fields.password}
              type="password"
              autoComplete="new-password"
              hint="At least 12 characters."
            />
          </>
        )}
        <button type="submit" className="btn btn-primary">
          Accept invitation
        </button>
      </Form>
    </AuthCard>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Invitation · Railwise" }];
