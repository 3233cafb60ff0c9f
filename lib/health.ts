import "server-only";
import { HeadBucketCommand } from "@aws-sdk/client-s3";
import { sql } from "kysely";
import { db } from "../db";
import { env } from "./env";
import { createMailTransport } from "./mail/transport";
import { s3 } from "./storage/s3";

/** "ok", or what went wrong. */
export type ServiceState = string;

async function probe(check: () => Promise<unknown>, timeoutMs = 3000): Promise<ServiceState> {
  try {
    await Promise.race([
      check(),
      new Promise((_, reject) =>
        setTimeout(() => reject(new Error(`no answer within ${timeoutMs} ms`)), timeoutMs),
      ),
    ]);
    return "ok";
  } catch (err) {
    return err instanceof Error ? err.message || err.name : String(err);
  }
}

/**
 * How long a good answer from the bucket or the mail server stands. The database is asked
 * at every call (the app cannot answer anything without it); asking the bucket and opening an
 * SMTP session at every call made the check cost ~100 ms and let anyone who can reach it
 * make the app open mail sessions at will. A failed probe is never reused: the next call
 * asks again, so a recovery shows at once and a new fault within this many ms.
 */
export const healthReuseMs = 5000;

type Probe = () => Promise<ServiceState>;

/** One probe's last good answer, and the probe in flight: concurrent calls share one. */
function reused(probeOnce: Probe): Probe {
  let goodUntil = 0;
  let inFlight: Promise<ServiceState> | null = null;
  return () => {
    if (Date.now() < goodUntil) return Promise.resolve("ok");
    inFlight ??= probeOnce().then((state) => {
      inFlight = null;
      if (state === "ok") goodUntil = Date.now() + healthReuseMs;
      return state;
    });
    return inFlight;
  };
}

const bucketState = reused(() => probe(() => s3().send(new HeadBucketCommand({ Bucket: env().S3_BUCKET }))));
const mailState = reused(async () => {
  const transport = createMailTransport(env().SMTP_URL);
  try {
    return await probe(() => transport.verify());
  } finally {
    transport.close();
  }
});

/** The state of each service the app depends on: "ok", or what went wrong. */
export async function checkHealth(): Promise<{
  database: ServiceState;
  bucket: ServiceState;
  mail: ServiceState;
}> {
  const [database, bucket, mail] = await Promise.all([
    probe(() => sql`SELECT 1`.execute(db)),
    bucketState(),
    mailState(),
  ]);
  return { database, bucket, mail };
}
