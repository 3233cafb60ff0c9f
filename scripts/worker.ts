// The worker process: sends the outbox (and, as later parts arrive, renders and
// fixity sweeps). Several workers may run against one database: each message is
// claimed under a row lock.
import { createDb } from "../db/client";
import { env } from "../lib/env";
import { deliverDueMail } from "../lib/mail/outbox";
import { createMailTransport } from "../lib/mail/transport";

const db = createDb(env().DATABASE_URL, 4);
const transport = createMailTransport(env().SMTP_URL);
let stopping = false;

async function loop(): Promise<void> {
  console.log(`[worker] started, sending mail through ${new URL(env().SMTP_URL).host}`);
  while (!stopping) {
    try {
      const { sent, failed } = await deliverDueMail(db, transport, env().MAIL_FROM);
      if (sent || failed) console.log(`[worker] mail: ${sent} sent, ${failed} failed`);
    } catch (err) {
      console.error("[worker] mail round failed:", err);
    }
    await new Promise((r) => setTimeout(r, 1000));
  }
  transport.close();
  await db.destroy();
}

for (const signal of ["SIGTERM", "SIGINT"] as const) {
  process.on(signal, () => {
    stopping = true;
  });
}

void loop();
