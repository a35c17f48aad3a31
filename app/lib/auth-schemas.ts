import { z } from "zod";

// Form schemas shared by the server actions and the client-side validation of the same forms.
export const emailField = z
  .string({ error: "Enter your e-mail address." })
  .trim()
  .toLowerCase()
  .pipe(z.email({ error: "Enter an e-mail address such as name@example.com." }));

export const newPasswordField = z
  .string({ error: "Choose a password." })
  .min(12, { error: "Use at least 12 characters." })
  .max(128, { error: "Use at most 128 characters." });

const honeypot = z.string().max(0).optional();

export const LoginSchema = z.object({
  email: emailField,
  password: z.string({ error: "Enter your password." }).max(128),
  redirectTo: z.string().optional(),
  website: honeypot,
});

export const SignupSchema = z.object({
  name: z.string({ error: "Enter your name." }).trim().min(1).max(100),
  shopName: z
    .string({ error: "Name your shop." })
    .trim()
    .min(2, { error: "Use at least 2 characters." })
    .max(100),
  email: emailField,
  password: newPasswordField,
  website: honeypot,
});

export const ForgotSchema = z.object({ email: emailField, website: honeypot });

export const ResetSchema = z
  .object({ password: newPasswordField, confirm: z.string({ error: "Repeat the password." }) })
  .refine((v) => v.password === v.confirm, { path: ["confirm"], error: "The two passwords differ." });

export const AcceptInviteSchema = z.object({
  name: z.string().trim().max(100).optional(),
  password: z.string({ error: "Enter a password." }).max(128),
});

export const ROLE_VALUES = ["owner", "lead", "tech", "desk"] as const;

export const InviteSchema = z.object({
  intent: z.literal("invite"),
  email: emailField,
  role: z.enum(ROLE_VALUES, { error: "Pick a role." }),
});

export const ChangeRoleSchema = z.object({
  intent: z.literal("change-role"),
  memberId: z.string().min(1),
  role: z.enum(ROLE_VALUES, { error: "Pick a role." }),
});

export const RemoveMemberSchema = z.object({
  intent: z.literal("remove-member"),
  memberId: z.string().min(1),
});

export const ShopSchema = z.object({
  intent: z.literal("shop"),
  name: z
    .string({ error: "Name your shop." })
    .trim()
    .min(2, { error: "Use at least 2 characters." })
    .max(100),
});

/** Only same-site paths, so a crafted link cannot bounce a signed-in member to another site. */
export function safeRedirect(to: string | null | undefined, fallback = "/boards") {
  if (!to?.startsWith("/") || to.startsWith("//") || to.startsWith("/\\")) return fallback;
  return to;
}
