import { describe, expect, it } from "vitest";
import type { z } from "zod";
import { fromZod } from "@/lib/http/errors";
import { acceptInvitationSchema, inviteSchema } from "@/lib/validation/people";
import { throttle, throttleDelayMs } from "@/lib/auth/sign-in-policy";

function fieldsOf(schema: z.ZodType, value: unknown): Record<string, string[]> {
  const r = schema.safeParse(value);
  if (r.success) return {};
  return fromZod(r.error).fields ?? {};
}

describe("bad input on the people forms", () => {
  it("names a malformed e-mail", () => {
    expect(fieldsOf(inviteSchema, { email: "ines@", role: "admin" }).email?.[0]).toMatch(
      /not a valid e-mail/,
    );
    expect(fieldsOf(inviteSchema, { email: "", role: "admin" }).email?.[0]).toMatch(/Enter an e-mail/);
  });

  it("names an unknown role", () => {
    expect(fieldsOf(inviteSchema, { email: "a@b.example", role: "owner" }).role?.[0]).toMatch(/Unknown role/);
  });

  it("normalises the address it accepts", () => {
    expect(inviteSchema.parse({ email: "  Ada@Lab.Example ", role: "curator" }).email).toBe(
      "ada@lab.example",
    );
  });

  it("refuses a short password and differing confirmation, each at its field", () => {
    const f = fieldsOf(acceptInvitationSchema, {
      token: "x".repeat(43),
      name: "Ada",
      password: "short",
      confirm: "short",
    });
    expect(f.password?.[0]).toMatch(/at least 12 characters/);
    const g = fieldsOf(acceptInvitationSchema, {
      token: "x".repeat(43),
      name: "Ada",
      password: "long enough pass",
      confirm: "long enough pasS",
    });
    expect(g.confirm?.[0]).toMatch(/differ/);
    expect(
      fieldsOf(acceptInvitationSchema, {
        token: "x".repeat(43),
        name: " ",
        password: "long enough pass",
        confirm: "long enough pass",
      }).name?.[0],
    ).toMatch(/Enter your name/);
  });
});

describe("sign-in throttling policy", () => {
  it("does not slow the first failures, then doubles the wait up to its cap", () => {
    for (let n = 0; n < throttle.slowAfter; n++) expect(throttleDelayMs(n)).toBe(0);
    const waits = Array.from({ length: 6 }, (_, i) => throttleDelayMs(throttle.slowAfter + i));
    expect(waits[0]).toBeGreaterThan(0);
    for (let i = 1; i < waits.length; i++) expect(waits[i]).toBeGreaterThanOrEqual(waits[i - 1]);
    expect(Math.max(...waits)).toBe(throttle.maxDelayMs);
  });

  it("locks only after it has slowed", () => {
    expect(throttle.lockAfter).toBeGreaterThan(throttle.slowAfter);
  });
});
