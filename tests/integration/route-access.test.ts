// For every API route in app/, each role gets exactly the access the permission table
// says. A route file whose method is not listed in route-access.ts fails here, and so
// does a listed route that lets in a role the table keeps out (a missing check).
import { promises as fs } from "node:fs";
import path from "node:path";
import { beforeAll, describe, expect, it } from "vitest";
import { demoAccounts } from "@/scripts/seed/demo-accounts";
import { can } from "@/lib/auth/permissions";
import { type Role, roles } from "@/lib/auth/roles";
import { routeAccess } from "@/lib/auth/route-access";
import { api, signInCookie } from "../support/app";

async function routeFiles(dir: string): Promise<string[]> {
  const out: string[] = [];
  for (const entry of await fs.readdir(dir, { withFileTypes: true })) {
    const p = path.join(dir, entry.name);
    if (entry.isDirectory()) out.push(...(await routeFiles(p)));
    else if (entry.name === "route.ts") out.push(p);
  }
  return out;
}

async function discoveredRoutes(): Promise<string[]> {
  const appDir = path.join(process.cwd(), "app");
  const keys: string[] = [];
  for (const file of await routeFiles(path.join(appDir, "api"))) {
    const source = await fs.readFile(file, "utf8");
    const urlPath = "/" + path.relative(appDir, path.dirname(file)).split(path.sep).join("/");
    const methods = new Set<string>();
    for (const m of source.matchAll(
      /export\s+(?:const|async function|function)\s+(GET|POST|PUT|PATCH|DELETE)\b/g,
    ))
      methods.add(m[1]);
    for (const m of source.matchAll(/\bas\s+(GET|POST|PUT|PATCH|DELETE)\b/g)) methods.add(m[1]);
    for (const method of methods) keys.push(`${method} ${urlPath}`);
  }
  return keys.sort();
}

const cookies = {} as Record<Role, string>;

beforeAll(async () => {
  for (const role of roles) {
    const account = demoAccounts.find((a) => a.role === role)!;
    cookies[role] = await signInCookie(account.email, account.password);
  }
});

describe("API route access", () => {
  it("lists every route method in route-access.ts, and nothing that does not exist", async () => {
    const found = await discoveredRoutes();
    expect(found.length).toBeGreaterThan(3);
    expect(found).toEqual(Object.keys(routeAccess).sort());
  });

  it("answers each role as the permission table says, and 401 to visitors", async () => {
    const checked: string[] = [];
    for (const [key, action] of Object.entries(routeAccess)) {
      if (action === "public" || key.includes("[...nextauth]")) continue;
      const [method, template] = key.split(" ");
      const url = template.replace(/\[[^\]]+\]/g, "00000000-0000-4000-8000-000000000000");
      const body = method === "GET" ? undefined : {};
      const anonymous = await api(url, { method, body });
      expect(anonymous.status, `${key} without sign-in`).toBe(401);
      for (const role of roles) {
        const res = await api(url, { method, body, cookie: cookies[role] });
        if (can(role, action)) expect([401, 403], `${key} as ${role} (allowed)`).not.toContain(res.status);
        else expect(res.status, `${key} as ${role} (not allowed)`).toBe(403);
        checked.push(`${key} ${role}`);
      }
    }
    expect(checked.length).toBeGreaterThan(0);
  });

  it("answers the health check without sign-in", async () => {
    const res = await api("/api/health");
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ database: "ok", bucket: "ok", mail: "ok" });
  });
});
