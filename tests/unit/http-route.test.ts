// The route wrapper: where a request comes from first, then the permission check, then the
// body's type and text; ids that cannot name a row answer 404; every answer is no-store.
import { NextRequest } from "next/server";
import { beforeEach, describe, expect, it, vi } from "vitest";
import { env } from "@/lib/env";
import { AppError } from "@/lib/http/errors";

const session = vi.hoisted(() => ({ requirePermission: vi.fn() }));
vi.mock("@/lib/auth/session", () => session);

const { route } = await import("@/lib/http/route");

const appOrigin = new URL(env().APP_URL).origin;
const req = new NextRequest(`${appOrigin}/api/discs/x`);
const withId = (id: string) => ({ params: Promise.resolve({ id }) });
const handler = route("GET /api/discs/[id]", (_req, { params }) => Promise.resolve({ id: params.id }));
const create = route("POST /api/accessions", async (r) => ({ got: await r.json() }));
const noParams = { params: Promise.resolve({}) };

function post(headers: Record<string, string>, body?: string): NextRequest {
  return new NextRequest(`${appOrigin}/api/accessions`, { method: "POST", headers, body });
}

describe("route()", () => {
  beforeEach(() => {
    session.requirePermission.mockReset();
    session.requirePermission.mockResolvedValue({
      id: "u1",
      email: "a@lab.example",
      name: "A",
      role: "archivist",
    });
  });

  it("passes a well-formed id to the handler", async () => {
    const res = await handler(req, withId("00000000-0000-4000-8000-000000000000"));
    expect(res.status).toBe(200);
    expect(await res.json()).toEqual({ id: "00000000-0000-4000-8000-000000000000" });
  });

  it("answers 404 for an id that cannot name a row, without running the handler", async () => {
    for (const id of [
      "nope",
      "------------------------------------",
      "00000000-0000-4000-8000-00000000000g",
    ]) {
      const res = await handler(req, withId(id));
      expect(res.status, id).toBe(404);
      expect((await res.json()).error.code).toBe("not_found");
    }
  });

  it("checks the permission before looking at the id", async () => {
    session.requirePermission.mockRejectedValue(new AppError("unauthenticated", 401, "Sign in to continue."));
    expect((await handler(req, withId("nope"))).status).toBe(401);
    expect(session.requirePermission).toHaveBeenCalledWith("catalogue:read");
  });

  it("marks answers and refusals no-store", async () => {
    expect(
      (await handler(req, withId("00000000-0000-4000-8000-000000000000"))).headers.get("cache-control"),
    ).toBe("no-store");
    expect((await handler(req, withId("nope"))).headers.get("cache-control")).toBe("no-store");
  });

  it("takes a JSON post from the app's own origin", async () => {
    const res = await create(
      post({ origin: appOrigin, "content-type": "application/json" }, '{"a":1}'),
      noParams,
    );
    expect(res.status).toBe(200);
    expect(await res.json()).toEqual({ got: { a: 1 } });
  });

  it("refuses a post from another origin before reading the session", async () => {
    const res = await create(
      post({ origin: "http://127.0.0.1:9", "content-type": "application/json" }, "{}"),
      noParams,
    );
    expect(res.status).toBe(403);
    expect((await res.json()).error.code).toBe("cross_site");
    expect(session.requirePermission).not.toHaveBeenCalled();
  });

  it("refuses a post that does not say where it comes from", async () => {
    const res = await create(post({ "content-type": "application/json" }, "{}"), noParams);
    expect(res.status).toBe(403);
    expect((await res.json()).error.message).toMatch(/did not say where it came from/);
  });

  it("refuses JSON sent as text/plain (a cross-site form's disguise) with 415", async () => {
    const res = await create(
      post({ origin: appOrigin, "content-type": "text/plain" }, '{"identifier":"X"}'),
      noParams,
    );
    expect(res.status).toBe(415);
    expect((await res.json()).error.code).toBe("unsupported_media_type");
  });

  it("answers 422 naming the field for a NUL in a JSON body or the query", async () => {
    const res = await create(
      post({ origin: appOrigin, "content-type": "application/json" }, '{"rows":[{"title":"a\\u0000b"}]}'),
      noParams,
    );
    expect(res.status).toBe(422);
    expect((await res.json()).error.fields).toHaveProperty(["rows.0.title"]);
    const list = route("GET /api/discs", () => Promise.resolve({}));
    const q = await list(new NextRequest(`${appOrigin}/api/discs?q=%00`), noParams);
    expect(q.status).toBe(422);
    expect((await q.json()).error.fields).toHaveProperty(["q"]);
  });
});
