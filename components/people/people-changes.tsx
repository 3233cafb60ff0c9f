"use client";
import { useQuery } from "@tanstack/react-query";
import { when } from "@/components/catalogue/format";
import { Panel } from "@/components/ui/panel";
import { fetchJson } from "@/lib/http/client";

interface Change {
  id: string;
  kind: string;
  subjectEmail: string;
  detail: Record<string, unknown>;
  at: string;
  actorName: string | null;
}

const kindText: Record<string, (c: Change) => string> = {
  invited: (c) => `invited ${c.subjectEmail} as ${String(c.detail.role)}`,
  invitation_accepted: (c) => `${c.subjectEmail} accepted the invitation`,
  role_changed: (c) =>
    `changed the role of ${c.subjectEmail} from ${String(c.detail.from)} to ${String(c.detail.to)}`,
  deactivated: (c) => `deactivated ${c.subjectEmail}`,
  reactivated: (c) => `reactivated ${c.subjectEmail}`,
  password_reset_requested: (c) => `a password reset was asked for ${c.subjectEmail}`,
  password_reset: (c) => `${c.subjectEmail} chose a new password`,
};

export function PeopleChanges() {
  const { data } = useQuery({
    queryKey: ["people-changes"],
    queryFn: () => fetchJson<{ changes: Change[] }>("/api/people-changes"),
  });
  return (
    <Panel title="Recent changes">
      {!data?.changes.length ? (
        <p className="text-sm text-ink-faint">No changes recorded yet.</p>
      ) : (
        <ol className="space-y-2 text-sm" data-testid="people-changes">
          {data.changes.slice(0, 30).map((c) => (
            <li key={c.id} className="flex gap-4">
              <time className="w-36 shrink-0 font-mono text-xs text-ink-faint" dateTime={c.at}>
                {when(c.at)}
              </time>
              <span>
                {c.actorName && !["invitation_accepted", "password_reset"].includes(c.kind) ? (
                  <strong className="font-medium">{c.actorName} </strong>
                ) : null}
                {(kindText[c.kind] ?? ((x: Change) => x.kind))(c)}
              </span>
            </li>
          ))}
        </ol>
      )}
    </Panel>
  );
}
