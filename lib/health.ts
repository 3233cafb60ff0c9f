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

/** The state of each service the app depends on: "ok", or what went wrong. */
export async function checkHealth(): Promise<{
  database: ServiceState;
  bucket: ServiceState;
  mail: ServiceState;
}> {
  const transport = createMailTransport(env().SMTP_URL);
  const [database, bucket, mail] = await Promise.all([
    probe(() => sql`SELECT 1`.execute(db)),
    probe(() => s3().send(new HeadBucketCommand({ Bucket: env().S3_BUCKET }))),
    probe(() => transport.verify()),
  ]);
  transport.close();
  return { database, bucket, mail };
}
