import { describe, expect, it } from "vitest";
import { actions, can, permissionTable } from "@/lib/auth/permissions";
import { roles } from "@/lib/auth/roles";
import { routeAccess } from "@/lib/auth/route-access";

describe("the permission table", () => {
  it("lets every role into the lab", () => {
    for (const role of roles) expect(can(role, "lab:enter")).toBe(true);
  });

  it("keeps people management with the admin alone", () => {
    expect(roles.filter((r) => can(r, "people:manage"))).toEqual(["admin"]);
    expect(roles.filter((r) => can(r, "outbox:read"))).toEqual(["admin"]);
  });

  it("gives each role its day in DESIGN.md", () => {
    expect(can("archivist", "catalogue:edit")).toBe(true);
    expect(can("engineer", "bench:use")).toBe(true);
    expect(can("engineer", "curves:edit")).toBe(true);
    expect(can("curator", "review:decide")).toBe(true);
    expect(can("curator", "audit:read")).toBe(true);
  });

  it("keeps roles out of each other's work", () => {
    expect(can("engineer", "review:decide")).toBe(false);
    expect(can("archivist", "bench:use")).toBe(false);
    expect(can("curator", "bench:use")).toBe(false);
    expect(can("curator", "curves:edit")).toBe(false);
    expect(can("archivist", "people:read")).toBe(false);
  });

  it("names only known actions, and every action belongs to some role", () => {
    const known = Object.keys(actions);
    for (const role of roles) for (const a of permissionTable[role]) expect(known).toContain(a);
    for (const a of known)
      expect(
        roles.some((r) => can(r, a as keyof typeof actions)),
        a,
      ).toBe(true);
  });

  it("lists a known action (or public) for every API route", () => {
    for (const [key, action] of Object.entries(routeAccess)) {
      expect(key).toMatch(/^(GET|POST|PUT|PATCH|DELETE) \/api\//);
      expect(action === "public" || action in actions, key).toBe(true);
    }
  });
});
