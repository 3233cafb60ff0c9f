import type { Role } from "./roles";

/**
 * What each role may do: the one permissions table. Every route handler and server
 * action checks it on the server through `requirePermission` (lib/auth/session.ts);
 * the navigation reads it too, but only to decide what to show.
 */
export const actions = {
  "lab:enter": "use the signed-in lab",
  "people:read": "see the lab's people",
  "people:manage": "invite people, change roles and deactivate accounts",
  "outbox:read": "read the lab's outgoing mail",
  "curves:read": "see the curve library",
  "curves:edit": "edit curve presets",
  "catalogue:read": "see the catalogue",
  "catalogue:edit": "edit the catalogue",
  "catalogue:assign": "assign sides to transfer engineers",
  "bench:use": "use the transfer bench",
  "review:decide": "approve or return sides",
  "audit:read": "read the provenance record",
  "audit:checkpoint": "write a checkpoint of the provenance log now",
  "fixity:run": "run fixity checks now",
  "settings:edit": "change the lab's settings",
  "packages:deliver": "write BagIt packages into the delivery bucket",
} as const;

export type Action = keyof typeof actions;

export const permissionTable: Record<Role, readonly Action[]> = {
  admin: [
    "lab:enter",
    "people:read",
    "people:manage",
    "outbox:read",
    "curves:read",
    "curves:edit",
    "catalogue:read",
    "catalogue:edit",
    "catalogue:assign",
    "audit:read",
    "audit:checkpoint",
    "fixity:run",
    "settings:edit",
    "packages:deliver",
  ],
  archivist: ["lab:enter", "curves:read", "catalogue:read", "catalogue:edit", "catalogue:assign"],
  engineer: ["lab:enter", "curves:read", "curves:edit", "catalogue:read", "bench:use"],
  curator: [
    "lab:enter",
    "curves:read",
    "catalogue:read",
    "review:decide",
    "audit:read",
    "audit:checkpoint",
    "fixity:run",
    "packages:deliver",
  ],
};

export function can(role: Role, action: Action): boolean {
  return permissionTable[role].includes(action);
}
