import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, Link, useNavigation } from "react-router";
import { AuthCard } from "~/components/auth-card";
import { Field, Honeypot } from "~/components/field";
import { ForgotSchema } from "~/lib/auth-schemas";
import { createEmailToken, findUserByEmail, RESET_TTL_MS } from "~/server/accounts.server";
import { appUrl, sendEmail } from "~/server/email.server";
import { clientAddress, describeWait, recordSignInFailure, signInWaitMs } from "~/server/throttle.server";
import type { Route } from "./+types/forgot-password";

export async function action({ request, context }: Route.ActionArgs) {
  const submission = parseWithZod(await request.formData(), { schema: ForgotSchema });
  if (submission.status !== "success")
    return data({ result: submission.reply(), sent: false }, { status: 400 });
  const { email } = submission.value;
  const address = clientAddress(request, context);
  const wait = await signInWaitMs(`reset:${email}`, address);
  if (wait > 0)
    return data(
      { result: submission.reply({ formErrors: [describeWait(wait)] }), sent: false },
      { status: 429 },
    );
  // Each request counts towards the same throttle as failed sign-ins, so the form cannot flood an inbox.
  await recordSignInFailure(`reset:${email}`, address);
  const user = await findUserByEmail(email);
  if (user) {
    const token = await createEmailToken({ purpose: "reset", email, userId: user.id });
    const link = appUrl(request, `/reset-password/${token}`);
    await sendEmail({
      to: email,
      subject: "Reset your Railwise password",
      text: `Someone asked to reset the password of your Railwise account.\n\nChoose a new password here (the link works once, for ${RESET_TTL_MS / 60_000} minutes):\n${link}\n\nIf it was not you, ignore this message; your password stays as it is.`,
    });
  }
  // The same answer whether or not the address has an account.
  return { result: submission.reply({ resetForm: true }), sent: true };
}

export default function ForgotPasswordRoute({ actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const [form, fields] = useForm({
    lastResult: actionData?.result,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: ForgotSchema }),
  });
  return (
    <AuthCard
      title="Reset your password"
      footer={
        <Link className="link" to="/login">
          Back to sign-in
        </Link>
      }
    >
      {actionData?.sent ? (
        <p role="status" className="rounded-md bg-info-soft px-3 py-2 text-sm">
          If that address has an account, a reset link is on its way. It works once and expires in an hour.
        </p>
      ) : null}
      <Form method="post" {...getFormProps(form)} className="mt-4 flex flex-col gap-4">
        {form.errors?.length ? (
          <p role="alert" className="text-bad text-sm">
            {form.errors.join(" ")}
          </p>
        ) : null}
        <Honeypot />
        <Field label="E-mail" meta={fields.email} type="email" autoComplete="username" autoFocus />
        <button type="submit" className="btn btn-primary" disabled={navigation.state === "submitting"}>
          Send reset link
        </button>
      </Form>
    </AuthCard>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Reset password · Railwise" }];
