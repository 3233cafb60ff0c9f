"use client";
import { useQuery, useQueryClient } from "@tanstack/react-query";
import { createColumnHelper } from "@tanstack/react-table";
import { useMemo, useState, useTransition } from "react";
import { changeRoleAction, setActiveAction } from "@/app/(lab)/people/actions";
import { when } from "@/components/catalogue/format";
import { Badge } from "@/components/ui/badge";
import { Button } from "@/components/ui/button";
import { DataTable } from "@/components/ui/data-table";
import { Notice } from "@/components/ui/notice";
import { type Role, roleLabels, roles } from "@/lib/auth/roles";
import { fetchJson } from "@/lib/http/client";

interface Person {
  id: string;
  email: string;
  name: string;
  role: Role;
  active: boolean;
  createdAt: string;
  lastSignInAt: string | null;
}
interface Invitation {
  id: string;
  email: string;
  role: Role;
  expiresAt: string;
}

const column = createColumnHelper<Person>();

export function PeopleTable({ currentUserId }: { currentUserId: string }) {
  const queryClient = useQueryClient();
  const { data, isLoading, error } = useQuery({
    queryKey: ["people"],
    queryFn: () => fetchJson<{ people: Person[]; invitations: Invitation[] }>("/api/users"),
  });
  const [message, setMessage] = useState<{ ok: boolean; text: string } | null>(null);
  const [pending, startTransition] = useTransition();

  const columns = useMemo(() => {
    const act = (fn: () => Promise<{ ok: boolean; message?: string } | null>) =>
      startTransition(async () => {
        const r = await fn();
        setMessage(r ? { ok: r.ok, text: r.message ?? "" } : null);
        await queryClient.invalidateQueries({ queryKey: ["people"] });
        await queryClient.invalidateQueries({ queryKey: ["people-changes"] });
      });
    return [
      column.accessor("name", {
        header: "Name",
        cell: (c) => (
          <div>
            <p className="font-medium">{c.getValue()}</p>
            <p className="whitespace-nowrap text-xs text-ink-faint">{c.row.original.email}</p>
          </div>
        ),
      }),
      column.accessor("role", {
        header: "Role",
        cell: (c) => (
          <select
            aria-label={`Role of ${c.row.original.name}`}
            value={c.getValue()}
            disabled={pending || c.row.original.id === currentUserId}
            onChange={(e) => act(() => changeRoleAction(c.row.original.id, e.target.value))}
            className="h-8 rounded border border-paper-edge bg-white px-2 text-sm"
          >
            {roles.map((r) => (
              <option key={r} value={r}>
                {roleLabels[r]}
              </option>
            ))}
          </select>
        ),
      }),
      column.accessor("active", {
        header: "Access",
        cell: (c) =>
          c.getValue() ? <Badge tone="ok">Active</Badge> : <Badge tone="alarm">Deactivated</Badge>,
      }),
      column.accessor("lastSignInAt", {
        header: "Last signed in",
        sortingFn: "datetime",
        cell: (c) => (
          <span className="whitespace-nowrap font-mono text-xs">
            {c.getValue() ? when(c.getValue() as string) : "never"}
          </span>
        ),
      }),
      column.display({
        id: "actions",
        header: "",
        cell: (c) =>
          c.row.original.id === currentUserId ? (
            <span className="text-xs text-ink-faint">you</span>
          ) : (
            <Button
              size="sm"
              variant={c.row.original.active ? "danger" : "secondary"}
              disabled={pending}
              onClick={() => act(() => setActiveAction(c.row.original.id, !c.row.original.active))}
            >
              {c.row.original.active ? "Deactivate" : "Reactivate"}
            </Button>
          ),
      }),
    ];
  }, [currentUserId, pending, queryClient]);

  return (
    <div className="space-y-4">
      {message ? <Notice tone={message.ok ? "success" : "error"}>{message.text}</Notice> : null}
      <DataTable
        columns={columns}
        data={data?.people}
        label="People"
        urlKey="people"
        loading={isLoading}
        error={error?.message}
        testId="people-table"
        defaultSort="name"
      />
      {data?.invitations.length ? (
        <div className="rounded-lg border border-dashed border-paper-edge p-4">
          <h2 className="mb-2 font-sans text-sm font-semibold uppercase tracking-wide text-ink-soft">
            Waiting for an answer
          </h2>
          <ul className="space-y-1 text-sm" data-testid="open-invitations">
            {data.invitations.map((i) => (
              <li key={i.id} className="flex justify-between gap-4">
                <span>
                  {i.email} · {roleLabels[i.role]}
                </span>
                <span className="whitespace-nowrap font-mono text-xs text-ink-faint">
                  expires {when(i.expiresAt)}
                </span>
              </li>
            ))}
          </ul>
        </div>
      ) : null}
    </div>
  );
}
