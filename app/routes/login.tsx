import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, Link, redirect, useNavigation, useSearchParams } from "react-router";
import { AuthCard, FormError } from "~/components/auth-card";
import { Field, Honeypot } from "~/components/field";
import { LoginSchema, safeRedirect } from "~/lib/auth-schemas";
import { checkCredentials } from "~/server/accounts.server";
import { listMemberships } from "~/server/auth.server";
import { getSession, sessionCookie, startFreshSession } from "~/server/session.server";
import { clientAddress, describeWait, recordSignInFailure, signInWaitMs } from "~/server/throttle.server";
import type { Route } from "./+types/login";

export async function loader({ request }: Route.LoaderArgs) {
  if (await getSession(request)) throw redirect("/boards");
  return null;
}

export async function action({ request, context }: Route.ActionArgs) {
  const formData = await request.formData();
  const submission = parseWithZod(formData, { schema: LoginSchema });
  if (submission.status !== "success") {
    return data({ result: submission.reply({ hideFields: ["password"] }) }, { status: 400 });
  }
  const { email, password, redirectTo } = submission.value;
  const address = clientAddress(request, context);
  const wait = await signInWaitMs(email, address);
  if (wait > 0) {
    return data(
      { result: submission.reply({ formErrors: [describeWait(wait)], hideFields: ["password"] }) },
      { status: 429 },
    );
  }
  const user = await checkCredentials(email, password);
  if (!user) {
    await recordSignInFailure(email, address);
    // One message for an unknown e-mail and a wrong password, so the form does not reveal who has an account.
    return data(
      {
        result: submission.reply({
          formErrors: ["That e-mail and password do not match an account."],
          hideFields: ["password"],
        }),
      },
      { status: 400 },
    );
  }
  const shop = (await listMemberships(user.id))[0];
  const { token } = await startFreshSession(request, user.id, shop?.shopId ?? null);
  return redirect(safeRedirect(redirectTo), { headers: { "Set-Cookie": sessionCookie(token) } });
}

export default function LoginRoute({ actionData }: Route.ComponentProps) {
  const [params] = useSearchParams();
  const navigation = useNavigation();
  const [form, fields] = useForm({
    lastResult: actionData?.result,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: LoginSchema }),
    shouldValidate: "onSubmit",
    shouldRevalidate: "onInput",
  });
  return (
    <AuthCard
      title="Sign in to your shop"
      footer={
        <>
          New to Railwise?{" "}
          <Link className="link" to="/signup">
            Set up a shop
          </Link>
        </>
      }
    >
      <Form method="post" {...getFormProps(form)} className="flex flex-col gap-4">
        <FormError errors={form.errors} />
        <Honeypot />
        <input type="hidden" name="redirectTo" value={params.get("redirectTo") ?? ""} />
        <Field label="E-mail" meta={fields.email} type="email" autoComplete="username" autoFocus />
        <Field label="Password" meta={fields.password} type="password" autoComplete="current-password" />
        <button type="submit" className="btn btn-primary" disabled={navigation.state === "submitting"}>
          {navigation.state === "submitting" ? "Signing in…" : "Sign in"}
        </button>
        <Link className="link text-sm" to="/forgot-password">
          Forgot your password?
        </Link>
      </Form>
    </AuthCard>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Sign in · Railwise" }];
