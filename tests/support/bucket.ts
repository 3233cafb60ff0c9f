// A client of the test profile's bucket (s3rver, which takes only its fixed key pair), for
// tests that look at the stored objects directly.
import { promises as fs } from "node:fs";
import path from "node:path";
import { S3Client } from "@aws-sdk/client-s3";

export function testBucketClient(): S3Client {
  return new S3Client({
    endpoint: process.env.S3_ENDPOINT,
    region: "us-east-1",
    forcePathStyle: true,
    credentials: { accessKeyId: "S3RVER", secretAccessKey: "S3RVER" },
    requestChecksumCalculation: "WHEN_REQUIRED",
    responseChecksumValidation: "WHEN_REQUIRED",
  });
}

/**
 * Flips one byte of a stored object in s3rver's own files, as bit rot would, keeping its
 * size (`at` below 0 counts from the end). The lab's bucket is shared by every test, so
 * the answer puts the byte back: call it once the test is done with the damage, and a
 * later backup of the whole lab finds every object as it was recorded.
 */
export async function damageStoredObject(key: string, at: number): Promise<() => Promise<void>> {
  const file = path.join(process.cwd(), "storage", "test", "s3", "rillbook", `${key}._S3rver_object`);
  const flip = async () => {
    const bytes = await fs.readFile(file);
    bytes[at < 0 ? bytes.length + at : at] ^= 0xff;
    await fs.writeFile(file, bytes);
  };
  await flip();
  return flip;
}
