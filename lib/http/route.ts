import "server-only";
import type { NextRequest } from "next/server";
import { routeAccess, type RouteKey } from "../auth/route-access";
import { requirePermission } from "../auth/session";
import type { SessionUser } from "../auth/session-user";
import { AppError, toAppError } from "./errors";

type Params = Record<string, string | string[]>;
type Context = { params: Promise<Params> };

// Every dynamic segment of the API ([id]) names a row by its UUID.
const uuid = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/**
 * The route's params; an id that cannot be a row's answers 404 here, once, instead of
 * reaching PostgreSQL as a malformed uuid. Catch-all segments ([...x]) are left as they are.
 */
async function paramsOf(context: Context | undefined): Promise<Params> {
  const params = context?.params ? await context.params : {};
  for (const value of Object.values(params)) {
    if (typeof value === "string" && !uuid.test(value)) throw new AppError("not_found", 404, "No such record.");
  }
  return params;
}

function respond(result: unknown): Response {
  return result instanceof Response ? result : Response.json(result);
}

function failure(err: unknown): Response {
  const e = toAppError(err);
  return Response.json(e.toJSON(), { status: e.status });
}

/**
 * Wraps a route handler: checks the permission that lib/auth/route-access.ts lists for
 * `key` before anything else runs, then turns errors into JSON answers (422 with field
 * errors, 401, 403, 404 …, and 500 without a stack).
 */
export function route(key: RouteKey, fn: (req: NextRequest, ctx: { params: Params; user: SessionUser }) => Promise<unknown>) {
  const action = routeAccess[key];
  if (action === "public") throw new Error(`${key} is public: use publicRoute`);
  return async (req: NextRequest, context: Context): Promise<Response> => {
    try {
      const user = await requirePermission(action);
      return respond(await fn(req, { params: await paramsOf(context), user }));
    } catch (err) {
      return failure(err);
    }
  };
}

/** A route anyone may call (health, sign-in plumbing): still listed in route-access.ts. */
export function publicRoute(key: RouteKey, fn: (req: NextRequest, ctx: { params: Params }) => Promise<unknown>) {
  if (routeAccess[key] !== "public") throw new Error(`${key} is not public in route-access.ts`);
  return async (req: NextRequest, context: Context): Promise<Response> => {
    try {
      return respond(await fn(req, { params: await paramsOf(context) }));
    } catch (err) {
      return failure(err);
    }
  };
}
