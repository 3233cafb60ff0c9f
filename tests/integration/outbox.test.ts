// The outbox keeps mail when the mail server is down, retries it, and sends it once.
import { afterAll, describe, expect, it } from "vitest";
import { deliverDueMail, enqueueMail, retryDelaySeconds } from "@/lib/mail/outbox";
import { createMailTransport } from "@/lib/mail/transport";
import { uniqueEmail, waitForMail } from "../support/app";
import { testDb } from "../support/db";
import { until } from "../support/pipeline";

afterAll(async () => {
  await testDb.destroy();
});

describe("the outbox", () => {
  it("keeps a message when the mail server is down and sends it once it is back", async () => {
    const to = uniqueEmail("outbox");
    const id = await testDb
      .transaction()
      .execute((trx) => enqueueMail(trx, { to, subject: "Fixity report", text: "All objects verified." }));
    // Keep the running worker away from it while the server is "down".
    await testDb
      .updateTable("outbox")
      .set({ next_attempt_at: new Date(Date.now() + 3600_000) })
      .where("id", "=", id)
      .execute();

    // Nothing listens on port 9 of loopback: the send fails and the message waits.
    const down = createMailTransport("smtp://127.0.0.1:9");
    const round = await deliverDueMail(testDb, down, "Rillbook <rillbook@lab.example>", { sendNow: [id] });
    expect(round).toEqual({ sent: 0, failed: 1 });
    down.close();
    const waiting = await testDb
      .selectFrom("outbox")
      .select(["status", "attempts", "last_error", "next_attempt_at"])
      .where("id", "=", id)
      .executeTakeFirstOrThrow();
    expect(waiting.status).toBe("queued");
    expect(waiting.attempts).toBeGreaterThanOrEqual(1);
    expect(waiting.last_error).toBeTruthy();
    expect(waiting.next_attempt_at.getTime()).toBeGreaterThan(Date.now());

    // Due again: the running worker picks it up and the sink receives it exactly once.
    await testDb.updateTable("outbox").set({ next_attempt_at: new Date() }).where("id", "=", id).execute();
    const mail = await waitForMail((m) => m.to.includes(to));
    expect(mail.subject).toBe("Fixity report");
    // The sink may hold the message a moment before the worker's transaction marks it sent.
    const sent = await until(
      "the message marked sent",
      async () => {
        const row = await testDb
          .selectFrom("outbox")
          .select(["status", "sent_at"])
          .where("id", "=", id)
          .executeTakeFirstOrThrow();
        return row.status === "queued" ? undefined : row;
      },
      20_000,
    );
    expect(sent.status).toBe("sent");
    expect(sent.sent_at).not.toBeNull();
  });

  it("backs off between attempts", () => {
    expect(retryDelaySeconds(1)).toBe(30);
    expect(retryDelaySeconds(2)).toBe(60);
    expect(retryDelaySeconds(20)).toBe(3600);
  });
});
