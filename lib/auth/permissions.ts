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
  "campaigns:run": "start, cancel and retry re-render campaigns after a preset is corrected",
  "audit:read": "read the provenance record",
  "audit:checkpoint": "write a checkpoint of the provenance log now",
  "fixity:run": "run fixity checks now",
  "settings:edit": "change the lab's settings",
  "equipment:read": "see the equipment register, its chains, calibrations and recalls",
  "equipment:edit": "keep the equipment register: items, chains and findings",
  "equipment:calibrate": "record a calibration of a chain",
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
    "equipment:read",
    "equipment:edit",
    "packages:deliver",
  ],
  archivist: [
    "lab:enter",
    "curves:read",
    "catalogue:read",
    "catalogue:edit",
    "catalogue:assign",
    "equipment:read",
  ],
  engineer: [
    "lab:enter",
    "curves:read",
    "curves:edit",
    "catalogue:read",
    "bench:use",
    "equipment:read",
    "equipment:edit",
    "equipment:calibrate",
    "campaigns:run",
  ],
  curator: [
    "lab:enter",
    "curves:read",
    "catalogue:read",
    "review:decide",
    "audit:read",
    "audit:checkpoint",
    "fixity:run",
    "campaigns:run",
    "equipment:read",
    "packages:deliver",
  ],
};

export function can(role: Role, action: Action): boolean {
  return permissionTable[role].includes(action);
}
