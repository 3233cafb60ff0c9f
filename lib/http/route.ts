import "server-only";
import type { NextRequest } from "next/server";
import { routeAccess, type RouteKey } from "../auth/route-access";
import { requirePermission } from "../auth/session";
import type { SessionUser } from "../auth/session-user";
import { env } from "../env";
import { refuseBadText } from "../validation/text";
import { AppError, toAppError } from "./errors";
import { checkSameOrigin, mediaType, originMessages, stateChangingMethods } from "./same-origin";

type Params = Record<string, string | string[]>;
type Context = { params: Promise<Params> };

// Every dynamic segment of the API ([id]) names a row by its UUID.
export const uuid = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/**
 * The route's params; an id that cannot be a row's answers 404 here, once, instead of
 * reaching PostgreSQL as a malformed uuid. Catch-all segments ([...x]) are left as they are.
 */
async function paramsOf(context: Context | undefined): Promise<Params> {
  const params = context?.params ? await context.params : {};
  for (const value of Object.values(params)) {
    if (typeof value === "string" && !uuid.test(value))
      throw new AppError("not_found", 404, "No such record.");
  }
  return params;
}

export interface RouteOptions {
  /**
   * Media types of the bodies the handler reads, when not JSON (the catalogue import takes
   * multipart form-data or a CSV). Every other state-changing route reads JSON only.
   */
  accepts?: readonly string[];
}

const jsonOnly = ["application/json"] as const;

/** Refuses a state-changing request from another site, before the session is even read. */
function refuseCrossSite(req: NextRequest): void {
  if (!stateChangingMethods.has(req.method.toUpperCase())) return;
  const verdict = checkSameOrigin(req.headers, new URL(env().APP_URL).origin);
  if (!verdict.ok) throw new AppError("cross_site", 403, originMessages[verdict.reason]);
}

/**
 * The body's media type must be one the route reads (JSON unless it says otherwise): a
 * form another site posts as text/plain is not JSON, however it is spelled. Bad text
 * (lib/validation/text.ts) in the query or a JSON body answers 422 with the field named.
 */
async function checkInput(req: NextRequest, options: RouteOptions): Promise<void> {
  refuseBadText(Object.fromEntries(req.nextUrl.searchParams));
  if (!stateChangingMethods.has(req.method.toUpperCase())) return;
  const accepts = options.accepts ?? jsonOnly;
  const type = mediaType(req.headers.get("content-type"));
  if (type === null) {
    // No declared type is fine only with no body at all.
    if ((await req.clone().text()) === "") return;
  } else if (accepts.includes(type)) {
    if (type !== "application/json") return;
    let body: unknown;
    try {
      body = JSON.parse(await req.clone().text());
    } catch {
      return; // the handler's own parse answers for a body that is not JSON
    }
    refuseBadText(body);
    return;
  }
  const wanted = accepts.join(" or ");
  throw new AppError(
    "unsupported_media_type",
    415,
    `This request's body must be ${wanted}${type ? `, not ${type}` : " with a Content-Type header saying so"}.`,
  );
}

/** API answers carry personal data: no browser or proxy may keep a copy (unless the route said otherwise). */
function noStore(res: Response): Response {
  if (res.headers.has("cache-control")) return res;
  const headers = new Headers(res.headers);
  headers.set("cache-control", "no-store");
  // Response.redirect() answers have immutable headers: build the answer again around the same body.
  return new Response(res.body, { status: res.status, statusText: res.statusText, headers });
}

function respond(result: unknown): Response {
  return noStore(result instanceof Response ? result : Response.json(result));
}

function failure(err: unknown): Response {
  const e = toAppError(err);
  return noStore(Response.json(e.toJSON(), { status: e.status }));
}

/**
 * Wraps a route handler: a state-changing request from another site is refused (403),
 * then the permission that lib/auth/route-access.ts lists for `key` is checked before
 * anything else runs, then the body's type and text; errors become JSON answers (422 with
 * field errors, 401, 403, 404, 415 …, and 500 without a stack), all marked no-store.
 */
export function route(
  key: RouteKey,
  fn: (req: NextRequest, ctx: { params: Params; user: SessionUser }) => Promise<unknown>,
  options: RouteOptions = {},
) {
  const action = routeAccess[key];
  if (action === "public") throw new Error(`${key} is public: use publicRoute`);
  return async (req: NextRequest, context: Context): Promise<Response> => {
    try {
      refuseCrossSite(req);
      const user = await requirePermission(action);
      await checkInput(req, options);
      return respond(await fn(req, { params: await paramsOf(context), user }));
    } catch (err) {
      return failure(err);
    }
  };
}

/** A route anyone may call (health, sign-in plumbing): still listed in route-access.ts. */
export function publicRoute(
  key: RouteKey,
  fn: (req: NextRequest, ctx: { params: Params }) => Promise<unknown>,
  options: RouteOptions = {},
) {
  if (routeAccess[key] !== "public") throw new Error(`${key} is not public in route-access.ts`);
  return async (req: NextRequest, context: Context): Promise<Response> => {
    try {
      refuseCrossSite(req);
      await checkInput(req, options);
      return respond(await fn(req, { params: await paramsOf(context) }));
    } catch (err) {
      return failure(err);
    }
  };
}
