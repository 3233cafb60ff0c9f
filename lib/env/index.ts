import { z } from "zod";

/**
 * The one place that reads `process.env`. Defaults describe the demo profile that
 * `npm start` runs on loopback, so a developer's `next dev` works with no set-up;
 * production sets every URL (see README "Production").
 */
const envSchema = z.object({
  NODE_ENV: z.enum(["development", "production", "test"]).default("development"),
  /** The app's own role: not a superuser, owns no table (README "Database roles"). */
  DATABASE_URL: z.string().url().default("postgres://rillbook_app@127.0.0.1:54320/rillbook"),
  /** The owner role, for migrations only; without it migrations run as DATABASE_URL's role. */
  DATABASE_OWNER_URL: z.string().url().optional(),
  S3_ENDPOINT: z.string().url().default("http://127.0.0.1:54321"),
  S3_REGION: z.string().min(1).default("us-east-1"),
  S3_BUCKET: z.string().min(3).default("rillbook"),
  S3_ACCESS_KEY_ID: z.string().min(1).default("S3RVER"),
  S3_SECRET_ACCESS_KEY: z.string().min(1).default("S3RVER"),
  /** Path-style addressing: needed by s3rver and most self-hosted S3 servers. */
  S3_FORCE_PATH_STYLE: z
    .enum(["true", "false"])
    .default("true")
    .transform((v) => v === "true"),
  /** Bucket that delivered BagIt packages are written into; the lab's own bucket when not set. */
  DELIVERY_S3_BUCKET: z.string().min(3).optional(),
  /** Folder (key prefix) of delivered bags in that bucket: ends with "/". */
  DELIVERY_PREFIX: z
    .string()
    .regex(/^([A-Za-z0-9._-]+\/)+$/, "a key prefix such as delivery/ (letters, digits, . _ -, ending with /)")
    .default("delivery/"),
  SMTP_URL: z.string().url().default("smtp://127.0.0.1:54325"),
  MAIL_FROM: z.string().min(3).default("Rillbook <rillbook@lab.example>"),
  APP_URL: z.string().url().default("http://127.0.0.1:3000"),
  NEXTAUTH_SECRET: z.string().min(16).optional(),
  LAB_NAME: z.string().min(1).default("Marrow Hill Sound Archive"),
  /**
   * Memory (MiB) a render that needs a trim may fill with the filtered signal when the disk
   * beside its working folder has no room for it (lib/audio/render.ts); the rest goes to disk.
   */
  RENDER_MEMORY_MIB: z.coerce.number().int().min(0).max(1_048_576).default(1024),
});

export type Env = z.infer<typeof envSchema>;

let cached: Env | undefined;

export function env(): Env {
  if (!cached) {
    const parsed = envSchema.safeParse(process.env);
    if (!parsed.success) {
      const problems = parsed.error.issues.map((i) => `${i.path.join(".")}: ${i.message}`);
      throw new Error(`Rillbook configuration is invalid:\n  ${problems.join("\n  ")}`);
    }
    cached = parsed.data;
  }
  return cached;
}
