// The route wrapper: the permission check first, then ids that cannot name a row answer 404.
import type { NextRequest } from "next/server";
import { beforeEach, describe, expect, it, vi } from "vitest";
import { AppError } from "@/lib/http/errors";

const session = vi.hoisted(() => ({ requirePermission: vi.fn() }));
vi.mock("@/lib/auth/session", () => session);

const { route } = await import("@/lib/http/route");

const req = {} as NextRequest;
const withId = (id: string) => ({ params: Promise.resolve({ id }) });
const handler = route("GET /api/discs/[id]", async (_req, { params }) => ({ id: params.id }));

describe("route()", () => {
  beforeEach(() => {
    session.requirePermission.mockReset();
    session.requirePermission.mockResolvedValue({ id: "u1", email: "a@lab.example", name: "A", role: "archivist" });
  });

  it("passes a well-formed id to the handler", async () => {
    const res = await handler(req, withId("00000000-0000-4000-8000-000000000000"));
    expect(res.status).toBe(200);
    expect(await res.json()).toEqual({ id: "00000000-0000-4000-8000-000000000000" });
  });

  it("answers 404 for an id that cannot name a row, without running the handler", async () => {
    for (const id of ["nope", "------------------------------------", "00000000-0000-4000-8000-00000000000g"]) {
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
});
