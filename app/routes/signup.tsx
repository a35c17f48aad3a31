import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, Link, redirect, useNavigation } from "react-router";
import { AuthCard, FormError } from "~/components/auth-card";
import { Field, Honeypot } from "~/components/field";
import { SignupSchema } from "~/lib/auth-schemas";
import { createShopWithOwner, findUserByEmail } from "~/server/accounts.server";
import { audit } from "~/server/audit.server";
import { getSession, sessionCookie, startFreshSession } from "~/server/session.server";
import { clientAddress, describeWait, recordSignInFailure, signInWaitMs } from "~/server/throttle.server";
import { redirectWithToast } from "~/server/toast.server";
import type { Route } from "./+types/signup";

export async function loader({ request }: Route.LoaderArgs) {
  if (await getSession(request)) throw redirect("/boards");
  return null;
}

export async function action({ request, context }: Route.ActionArgs) {
  const formData = await request.formData();
  const submission = parseWithZod(formData, { schema: SignupSchema });
  if (submission.status !== "success") {
    return data({ result: submission.reply({ hideFields: ["password"] }) }, { status: 400 });
  }
  const { email, name, password, shopName } = submission.value;
  const address = clientAddress(request, context);
  const wait = await signInWaitMs(`signup:${address}`, address);
  if (wait > 0)
    return data({ result: submission.reply({ formErrors: [describeWait(wait)] }) }, { status: 429 });
  if (await findUserByEmail(email)) {
    // Counted like a failed sign-in so the form cannot be used to test many addresses quickly.
    await recordSignInFailure(`signup:${address}`, address);
    return data(
      {
        result: submission.reply({
          fieldErrors: {
            email: [
              "This e-mail cannot be used to set up a new shop. Sign in, or ask your shop's owner for an invitation.",
            ],
          },
          hideFields: ["password"],
        }),
      },
      { status: 400 },
    );
  }
  const { userId, shopId } = await createShopWithOwner({ email, name, password, shopName });
  await audit({ shopId, actorId: userId, action: "shop.created", subject: shopId });
  const { token } = await startFreshSession(request, userId, shopId);
  return redirectWithToast(
    "/boards",
    { kind: "success", message: `Welcome to Railwise. ${shopName} is ready; add your first board.` },
    { headers: { "Set-Cookie": sessionCookie(token) } },
  );
}

export default function SignupRoute({ actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const [form, fields] = useForm({
    lastResult: actionData?.result,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: SignupSchema }),
    shouldValidate: "onBlur",
    shouldRevalidate: "onInput",
  });
  return (
    <AuthCard
      title="Set up your shop"
      footer={
        <>
          Already have an account?{" "}
          <Link className="link" to="/login">
            Sign in
          </Link>
        </>
      }
    >
      <Form method="post" {...getFormProps(form)} className="flex flex-col gap-4">
        <FormError errors={form.errors} />
        <Honeypot />
        <Field label="Your name" meta={fields.name} autoComplete="name" autoFocus />
        <Field label="Shop name" meta={fields.shopName} autoComplete="organization" />
        <Field label="E-mail" meta={fields.email} type="email" autoComplete="username" />
        <Field
          label="Password"
          meta={fields.password}
          type="password"
          autoComplete="new-password"
          hint="At least 12 characters. A short sentence works well."
        />
        <button type="submit" className="btn btn-primary" disabled={navigation.state === "submitting"}>
          {navigation.state === "submitting" ? "Creating your shop…" : "Create shop"}
        </button>
        <p className="text-muted text-xs">You become the shop's owner and can invite your team afterwards.</p>
      </Form>
    </AuthCard>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Set up a shop · Railwise" }];
