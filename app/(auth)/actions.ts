"use server";
import { redirect } from "next/navigation";
import { type ActionState, formValues, runAction } from "@/lib/http/action";
import { acceptInvitation } from "@/lib/people/invitations";
import { requestPasswordReset, resetPassword } from "@/lib/people/password-resets";

// Public actions: the invitee and the person who forgot a password are not signed in.
// Each is guarded by its single-use token instead of a role.

export async function acceptInvitationAction(_prev: ActionState, form: FormData): Promise<ActionState> {
  const v = formValues(form);
  const state = await runAction(
    async () => {
      await acceptInvitation({ token: v.token, name: v.name, password: v.password, confirm: v.confirm });
    },
    { name: v.name ?? "" },
  );
  if (state?.ok) redirect("/sign-in?welcome=1");
  return state;
}

export async function requestResetAction(_prev: ActionState, form: FormData): Promise<ActionState> {
  const email = form.get("email");
  return runAction(
    async () => {
      await requestPasswordReset({ email });
      return "If that address belongs to an active account, a link to choose a new password is on its way. It works once, for two hours.";
    },
    { email: typeof email === "string" ? email : "" },
  );
}

export async function resetPasswordAction(_prev: ActionState, form: FormData): Promise<ActionState> {
  const v = formValues(form);
  const state = await runAction(async () => {
    await resetPassword({ token: v.token, password: v.password, confirm: v.confirm });
  });
  if (state?.ok) redirect("/sign-in?reset=done");
  return state;
}
