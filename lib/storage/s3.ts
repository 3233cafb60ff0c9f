import { S3Client } from "@aws-sdk/client-s3";
import { env } from "../env";

let client: S3Client | undefined;

/**
 * The S3 client for the lab's bucket. Checksums only when required: with the SDK's
 * default, presigned URLs carry an empty-body checksum and streamed uploads of
 * unknown length fail against s3rver and several self-hosted servers.
 */
export function s3(): S3Client {
  client ??= new S3Client({
    endpoint: env().S3_ENDPOINT,
    region: env().S3_REGION,
    forcePathStyle: env().S3_FORCE_PATH_STYLE,
    credentials: { accessKeyId: env().S3_ACCESS_KEY_ID, secretAccessKey: env().S3_SECRET_ACCESS_KEY },
    requestChecksumCalculation: "WHEN_REQUIRED",
    responseChecksumValidation: "WHEN_REQUIRED",
  });
  return client;
}
