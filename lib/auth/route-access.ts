import type { Action } from "./permissions";

/**
 * Every API route and method with the action it requires ("public" for none). The
 * route wrapper (lib/http/route.ts) reads its own entry, and the route-access test
 * fails for a route file whose method is missing here or lets a role in that the
 * permission table keeps out.
 */
export const routeAccess = {
  "GET /api/health": "public",
  "GET /api/auth/[...nextauth]": "public",
  "POST /api/auth/[...nextauth]": "public",
  "GET /api/me": "lab:enter",
  "GET /api/users": "people:read",
  "GET /api/people-changes": "people:read",
  "GET /api/outbox": "outbox:read",
  "GET /api/curves/presets": "curves:read",
  "POST /api/curves/presets": "curves:edit",
  "GET /api/curves/presets/[id]": "curves:read",
  "PATCH /api/curves/presets/[id]": "curves:edit",
  "GET /api/curves/presets/[id]/versions": "curves:read",
  "POST /api/curves/response": "curves:read",
  "POST /api/curves/fit": "curves:read",
  "GET /api/discs": "catalogue:read",
  "POST /api/discs": "catalogue:edit",
  "GET /api/discs/[id]": "catalogue:read",
  "PATCH /api/discs/[id]": "catalogue:edit",
  "GET /api/discs/[id]/events": "catalogue:read",
  "GET /api/discs/export": "catalogue:read",
  "POST /api/imports/preview": "catalogue:edit",
  "POST /api/imports": "catalogue:edit",
  "GET /api/accessions": "catalogue:read",
  "POST /api/accessions": "catalogue:edit",
  "POST /api/sides/[id]/transition": "catalogue:read",
  "POST /api/assignments": "catalogue:assign",
  "GET /api/queue": "bench:use",
  "GET /api/engineers": "catalogue:assign",
  "POST /api/curve-choices": "bench:use",
  "GET /api/sides/[id]/curve-choices": "catalogue:read",
} as const satisfies Record<string, Action | "public">;

export type RouteKey = keyof typeof routeAccess;
