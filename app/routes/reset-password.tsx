import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, Link } from "react-router";
import { AuthCard } from "~/components/auth-card";
import { Field } from "~/components/field";
import { ResetSchema } from "~/lib/auth-schemas";
import { consumeToken, findLiveToken, retireResetTokens, setPassword } from "~/server/accounts.server";
import { audit } from "~/server/audit.server";
import { deleteAllSessions } from "~/server/session.server";
import { redirectWithToast } from "~/server/toast.server";
import type { Route } from "./+types/reset-password";

export async function loader({ params }: Route.LoaderArgs) {
  const token = await findLiveToken("reset", params.token);
  return { valid: !!token };
}

export async function action({ request, params }: Route.ActionArgs) {
  const submission = parseWithZod(await request.formData(), { schema: ResetSchema });
  if (submission.status !== "success")
    return data({ result: submission.reply({ hideFields: ["password", "confirm"] }) }, { status: 400 });
  const token = await findLiveToken("reset", params.token);
  if (!token?.userId || !(await consumeToken(token.id))) {
    return data(
      {
        result: submission.reply({
          formErrors: ["This reset link has expired or was already used. Ask for a new one."],
        }),
      },
      { status: 400 },
    );
  }
  await setPassword(token.userId, submission.value.password);
  await retireResetTokens(token.userId);
  // A new password ends every session, including any an intruder may hold.
  await deleteAllSessions(token.userId);
  await audit({ shopId: null, actorId: token.userId, action: "user.password-reset" });
  return redirectWithToast("/login", {
    kind: "success",
    message: "Password changed. Sign in with your new password.",
  });
}

export default function ResetPasswordRoute({ loaderData, actionData }: Route.ComponentProps) {
  const [form, fields] = useForm({
    lastResult: actionData?.result,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: ResetSchema }),
  });
  if (!loaderData.valid) {
    return (
      <AuthCard title="This link no longer works">
        <p className="text-sm">Reset links work once and expire after an hour.</p>
        <Link className="link mt-4 inline-block" to="/forgot-password">
          Ask for a new link
        </Link>
      </AuthCard>
    );
  }
  return (
    <AuthCard title="Choose a new password">
      <Form method="post" {...getFormProps(form)} className="flex flex-col gap-4">
        {form.errors?.length ? (
          <p role="alert" className="text-bad text-sm">
            {form.errors.join(" ")}
          </p>
        ) : null}
        <Field
          label="New password"
          meta={fields.password}
          type="password"
          autoComplete="new-password"
          autoFocus
          hint="At least 12 characters."
        />
        <Field label="Repeat it" meta={fields.confirm} type="password" autoComplete="new-password" />
        <button type="submit" className="btn btn-primary">
          Save password
        </button>
      </Form>
    </AuthCard>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "New password · Railwise" }];
