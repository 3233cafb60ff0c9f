import { z } from "zod";
import { roles } from "../auth/roles";
import { cleanString } from "./text";

export const emailSchema = z
  .string({ error: "Enter an e-mail address." })
  .trim()
  .toLowerCase()
  .min(1, "Enter an e-mail address.")
  .max(254, "That e-mail address is too long.")
  .pipe(z.email({ error: "That is not a valid e-mail address: one looks like name@example.org." }));

/** At least 12 characters: long passphrases beat composition rules (NIST SP 800-63B §3.1.1.2). */
export const passwordSchema = z
  .string({ error: "Enter a password." })
  .min(12, "Use at least 12 characters for the password.")
  .max(200, "Use at most 200 characters for the password.");

export const nameSchema = cleanString()
  .trim()
  .min(1, "Enter your name.")
  .max(120, "Use at most 120 characters for the name.");

export const roleSchema = z.enum(roles, { error: `Unknown role: choose one of ${roles.join(", ")}.` });

export const inviteSchema = z.object({ email: emailSchema, role: roleSchema });

export const changeRoleSchema = z.object({ userId: z.uuid({ error: "Unknown person." }), role: roleSchema });

export const setActiveSchema = z.object({
  userId: z.uuid({ error: "Unknown person." }),
  active: z.enum(["true", "false"]).transform((v) => v === "true"),
});

const newPassword = z
  .object({ password: passwordSchema, confirm: z.string() })
  .refine((v) => v.password === v.confirm, { path: ["confirm"], message: "The two passwords differ." });

export const acceptInvitationSchema = z
  .object({ token: z.string().min(20, "This link is incomplete."), name: nameSchema })
  .and(newPassword);

export const resetRequestSchema = z.object({ email: emailSchema });

export const resetPasswordSchema = z
  .object({ token: z.string().min(20, "This link is incomplete.") })
  .and(newPassword);

export const signInSchema = z.object({
  email: emailSchema,
  password: z.string().min(1, "Enter your password."),
});
