"use server";
import { revalidatePath } from "next/cache";
import { requirePermission } from "@/lib/auth/session";
import { type ActionState, formValues, runAction } from "@/lib/http/action";
import { changeRole, setActive } from "@/lib/people/accounts";
import { invitePerson } from "@/lib/people/invitations";

export async function inviteAction(_prev: ActionState, form: FormData): Promise<ActionState> {
  const v = formValues(form);
  const state = await runAction(
    async () => {
      const actor = await requirePermission("people:manage");
      await invitePerson(actor, { email: v.email, role: v.role });
      return `Invitation sent to ${v.email.trim().toLowerCase()}. The link works once, for 72 hours.`;
    },
    { email: v.email ?? "", role: v.role ?? "" },
  );
  revalidatePath("/people");
  return state;
}

export async function changeRoleAction(userId: string, role: string): Promise<ActionState> {
  return runAction(async () => {
    const actor = await requirePermission("people:manage");
    await changeRole(actor, { userId, role });
    revalidatePath("/people");
    return "Role changed.";
  });
}

export async function setActiveAction(userId: string, active: boolean): Promise<ActionState> {
  return runAction(async () => {
    const actor = await requirePermission("people:manage");
    await setActive(actor, { userId, active: String(active) });
    revalidatePath("/people");
    return active ? "Access restored." : "Access ended: it stops at their next request.";
  });
}
