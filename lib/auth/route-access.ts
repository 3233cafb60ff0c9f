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
  "GET /api/sides/[id]": "catalogue:read",
  "POST /api/sides/[id]/transition": "catalogue:read",
  "POST /api/assignments": "catalogue:assign",
  "GET /api/queue": "bench:use",
  "GET /api/engineers": "catalogue:assign",
  "POST /api/curve-choices": "bench:use",
  "GET /api/sides/[id]/curve-choices": "catalogue:read",
  "POST /api/uploads": "bench:use",
  "GET /api/uploads": "bench:use",
  "POST /api/uploads/parts": "bench:use",
  "POST /api/uploads/complete": "bench:use",
  "POST /api/uploads/abort": "bench:use",
  "POST /api/renders": "bench:use",
  "GET /api/renders/[id]/download": "catalogue:read",
  "GET /api/transfers/[id]/download": "catalogue:read",
  "GET /api/sides/[id]/renders": "catalogue:read",
  "GET /api/sides/[id]/transfers": "catalogue:read",
  "POST /api/fixity": "fixity:run",
  "GET /api/fixity": "audit:read",
  "GET /api/sides/[id]/fixity": "catalogue:read",
  "POST /api/sides/[id]/review": "review:decide",
  "GET /api/sides/[id]/review": "catalogue:read",
  "GET /api/reviews": "review:decide",
  "GET /api/provenance/verify": "audit:read",
  "GET /api/provenance/events": "audit:read",
  "GET /api/settings": "audit:read",
  "PATCH /api/settings": "settings:edit",
} as const satisfies Record<string, Action | "public">;

export type RouteKey = keyof typeof routeAccess;
