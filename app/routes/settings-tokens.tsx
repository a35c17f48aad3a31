import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, useNavigation } from "react-router";
import { z } from "zod";
import { Field } from "~/components/field";
import { PageHeader } from "~/components/page-header";
import { can, ROLE_LABELS } from "~/lib/permissions";
import {
  createApiToken,
  listApiTokens,
  MAX_TOKENS_PER_MEMBER,
  revokeApiToken,
} from "~/server/api-tokens.server";
import { audit } from "~/server/audit.server";
import { requireMember } from "~/server/auth.server";
import { redirectWithToast } from "~/server/toast.server";
import type { Route } from "./+types/settings-tokens";

export async function loader({ request }: Route.LoaderArgs) {
  const { member, role } = await requireMember(request, { permission: "manage:own-tokens" });
  return {
    tokens: await listApiTokens(member.id),
    role,
    canReadInsights: can(role, "view:insights"),
  };
}

export const CreateTokenSchema = z.object({
  intent: z.literal("create"),
  name: z
    .string({ error: "Name the token, e.g. after the spreadsheet that uses it." })
    .trim()
    .min(1, { error: "Name the token, e.g. after the spreadsheet that uses it." })
    .max(80, { error: "Use at most 80 characters." }),
});
export const RevokeTokenSchema = z.object({
  intent: z.literal("revoke"),
  tokenId: z.string().min(1).max(80),
});

export async function action({ request }: Route.ActionArgs) {
  const { member, user, shop } = await requireMember(request, { permission: "manage:own-tokens" });
  const formData = await request.formData();
  if (formData.get("intent") === "revoke") {
    const submission = parseWithZod(formData, { schema: RevokeTokenSchema });
    if (submission.status !== "success")
      return data({ result: submission.reply(), created: null }, { status: 400 });
    const done = await revokeApiToken(member.id, submission.value.tokenId);
    if (!done)
      return data(
        {
          result: submission.reply({ formErrors: ["That token is not one of yours or is already revoked."] }),
          created: null,
        },
        { status: 404 },
      );
    await audit({
      shopId: shop.id,
      actorId: user.id,
      action: "api-token.revoked",
      subject: submission.value.tokenId,
    });
    return redirectWithToast("/settings/tokens", {
      kind: "success",
      message: "Token revoked. Scripts using it stop working now.",
    });
  }
  const submission = parseWithZod(formData, { schema: CreateTokenSchema });
  if (submission.status !== "success")
    return data({ result: submission.reply(), created: null }, { status: 400 });
  if ((await listApiTokens(member.id)).length >= MAX_TOKENS_PER_MEMBER)
    return data(
      {
        result: submission.reply({
          formErrors: [`You have ${MAX_TOKENS_PER_MEMBER} tokens; revoke one you no longer use first.`],
        }),
        created: null,
      },
      { status: 400 },
    );
  const { id, token } = await createApiToken({
    shopId: shop.id,
    memberId: member.id,
    userId: user.id,
    name: submission.value.name,
  });
  await audit({
    shopId: shop.id,
    actorId: user.id,
    action: "api-token.created",
    subject: id,
    data: { name: submission.value.name },
  });
  // The secret is shown in this one response and never again (only its hash is stored), so no redirect here.
  return data({
    result: submission.reply({ resetForm: true }),
    created: { id, name: submission.value.name, token },
  });
}

export default function SettingsTokensRoute({ loaderData, actionData }: Route.ComponentProps) {
  const { tokens, role, canReadInsights } = loaderData;
  const navigation = useNavigation();
  const [form, fields] = useForm({
    id: "create-token",
    lastResult: actionData?.result,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: CreateTokenSchema }),
  });
  const created = actionData?.created;
  return (
    <>
      <PageHeader
        title="API tokens"
        subtitle="Personal tokens for your own spreadsheets and scripts: they read what your role can read."
      />
      <div className="grid gap-6 lg:grid-cols-2">
        <section className="card">
          <h2 className="mb-3 font-semibold">New token</h2>
          {created ? (
            <div role="status" className="mb-4 rounded-md border border-ok bg-ok-soft p-3 text-sm">
              <p className="font-medium">
                Token “{created.name}” created. Copy it now: it is shown only once.
              </p>
              <label htmlFor="new-token" className="sr-only">
                New token
              </label>
              <input
                id="new-token"
                readOnly
                value={created.token}
                className="field-input mt-2 font-mono text-xs"
                onFocus={(e) => e.currentTarget.select()}
                data-testid="new-token"
              />
            </div>
          ) : null}
          <Form method="post" {...getFormProps(form)} className="flex flex-col gap-3">
            <input type="hidden" name="intent" value="create" />
            <Field label="Name" meta={fields.name} hint="e.g. Monthly parts sheet" />
            {form.errors?.length ? <p className="text-sm text-bad">{form.errors.join(" ")}</p> : null}
            <button
              type="submit"
              className="btn btn-primary self-start"
              disabled={navigation.state === "submitting"}
            >
              Create token
            </button>
          </Form>
        </section>
        <section className="card text-sm">
          <h2 className="mb-2 font-semibold">Using a token</h2>
          <p>
            Send it as <code className="font-mono">Authorization: Bearer &lt;token&gt;</code>. Your role here
            is {ROLE_LABELS[role]}.{" "}
            {canReadInsights
              ? "It can read the insights tables as JSON:"
              : "Your role cannot read insights, so the insights API answers 403 for your tokens."}
          </p>
          {canReadInsights ? (
            <pre className="mt-2 overflow-x-auto rounded-md bg-sunken p-2 font-mono text-xs">
              GET /api/v1/insights/hot-spots?from=2026-01-01&amp;board=…{"\n"}
              tables: hot-spots, strategies, escalations, first-time-fix, repeats, parts
            </pre>
          ) : null}
          <p className="mt-2 text-muted">
            Treat a token like a password. Revoke it when a script no longer needs it.
          </p>
        </section>
      </div>
      <section className="card mt-6">
        <h2 className="mb-3 font-semibold">Your tokens</h2>
        {tokens.length === 0 ? (
          <p className="text-sm text-muted">No tokens yet.</p>
        ) : (
          <table className="w-full text-left text-sm">
            <thead className="text-muted">
              <tr>
                <th className="py-2 font-medium">Name</th>
                <th className="py-2 font-medium">Created</th>
                <th className="py-2 font-medium">Last used</th>
                <th className="py-2 font-medium">
                  <span className="sr-only">Actions</span>
                </th>
              </tr>
            </thead>
            <tbody>
              {tokens.map((t) => (
                <tr key={t.id} className="border-t border-line">
                  <td className="py-2">{t.name}</td>
                  <td className="py-2">{new Date(t.createdAt).toLocaleDateString("en-CA")}</td>
                  <td className="py-2">
                    {t.lastUsedAt ? new Date(t.lastUsedAt).toLocaleString("en-CA") : "never"}
                  </td>
                  <td className="py-2 text-right">
                    <Form method="post">
                      <input type="hidden" name="intent" value="revoke" />
                      <input type="hidden" name="tokenId" value={t.id} />
                      <button
                        type="submit"
                        className="btn btn-danger px-3 py-1"
                        aria-label={`Revoke ${t.name}`}
                      >
                        Revoke
                      </button>
                    </Form>
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </section>
    </>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "API tokens · Railwise" }];
